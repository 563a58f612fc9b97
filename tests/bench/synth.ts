// Synthesis time and controller cost: the largest fixture in every encoding, and seeded random
// machines of 16 states and 8 controller inputs. Figures are reported, never asserted.
import fc from 'fast-check';
import type { Machine } from '../../core/ir/schema';
import { synthesize } from '../../core/synth/index';
import type { EncodingKind } from '../../core/synth/schema';
import { designArb, fixtureMachines, machineFromText, renderDesign, type DesignShape } from '../synth-reference';

/** 16 states; 5 bit inputs + 3 status atoms, each atom forced into some condition: 8 controller inputs. */
const BENCH_SHAPE: DesignShape = { maxStates: 16, minStates: 16, maxBitInputs: 5, minBitInputs: 5, maxTransitions: 3, statusAtoms: 3, everyAtom: true };
const SEEDS = [1, 2, 3, 4, 5];

/** Median of `repeats` timed runs after one warm-up run (a single timed run when repeats is 1). */
function timed(m: Machine, encoding: EncodingKind, repeats: number): { ms: number; line: string[] } {
  const runs: number[] = [];
  let result = synthesize(m, { encoding });
  for (let k = 0; k < repeats; k++) {
    const t0 = performance.now();
    result = synthesize(m, { encoding });
    runs.push(performance.now() - t0);
  }
  const ms = runs.sort((a, b) => a - b)[Math.floor(repeats / 2)];
  if (!result.ok) return { ms, line: [encoding, '-', '-', '-', '-', '-', result.error.slice(0, 60)] };
  const s = result.result;
  const heuristic = s.equations.filter((e) => e.method === 'heuristic').length + (s.fullDecode?.filter((e) => e.method === 'heuristic').length ?? 0);
  return { ms, line: [encoding, String(s.cost.flipFlops), String(s.cost.products), String(s.cost.literals), String(s.variables.length), `${ms.toFixed(1)} ms`, `${heuristic} heuristic`] };
}

function table(rows: string[][]): string[] {
  const widths = rows[0].map((_, i) => Math.max(...rows.map((r) => (r[i] ?? '').length)));
  return rows.map((r) => '  ' + r.map((x, i) => (i === 0 ? x.padEnd(widths[i]) : x.padStart(widths[i]))).join('  '));
}

export async function benchSynth(): Promise<string> {
  const lines = ['Controller synthesis time and cost (one core; each time follows a warm-up run)'];
  const header = ['encoding', 'flip-flops', 'products', 'literals', 'vars', 'time', 'equations'];
  const fixtures = fixtureMachines();
  const largest = fixtures.reduce((a, b) => (b.machine.states.length > a.machine.states.length ? b : a));
  lines.push(`  largest fixture: ${largest.file} (${largest.machine.states.length} states), median of 3 runs`);
  const encodings: EncodingKind[] = largest.machine.states.every((s) => s.code !== null) ? ['binary', 'gray', 'onehot', 'custom'] : ['binary', 'gray', 'onehot'];
  lines.push(...table([header, ...encodings.map((e) => timed(largest.machine, e, 3).line)]));

  lines.push('', '  seeded random machines, 16 states, 8 controller inputs (fast-check sample, seeds ' + SEEDS.join(',') + '), one run each');
  const totals = new Map<string, { ms: number[]; products: number; literals: number }>();
  const rows: string[][] = [['seed/encoding', ...header.slice(1)]];
  for (const seed of SEEDS) {
    const spec = fc.sample(designArb(BENCH_SHAPE), { numRuns: 1, seed })[0];
    const m = machineFromText(renderDesign(spec, BENCH_SHAPE), `random_${seed}.tsm`);
    for (const e of ['binary', 'gray', 'onehot'] as const) {
      const t = timed(m, e, 1);
      rows.push([`${seed}/${e}`, ...t.line.slice(1)]);
      const agg = totals.get(e) ?? { ms: [], products: 0, literals: 0 };
      agg.ms.push(t.ms);
      agg.products += Number(t.line[2]);
      agg.literals += Number(t.line[3]);
      totals.set(e, agg);
    }
    const check = synthesize(m, { encoding: 'binary' });
    if (check.ok && check.result.controller.inputs.length !== 8) rows.push([`  (seed ${seed} has ${check.result.controller.inputs.length} controller inputs)`]);
  }
  lines.push(...table(rows));
  for (const [e, a] of totals) lines.push(`  ${e}: mean ${(a.ms.reduce((x, y) => x + y, 0) / a.ms.length).toFixed(1)} ms, worst ${Math.max(...a.ms).toFixed(1)} ms, total ${a.products} products / ${a.literals} literals over ${SEEDS.length} machines`);
  return lines.join('\n');
}
