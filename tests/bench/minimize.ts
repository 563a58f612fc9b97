// Minimizer speed and quality: seeded random functions of 8 to 24 inputs, exact against heuristic
// where both apply, controller-like next-state functions, a 24-input priority encoder, and the
// Berkeley Espresso program (npm espresso-logic-minimizer) on the same functions for scale.
import { createRequire } from 'node:module';
import { minimize, type BoolFunction, type MinimizeResult } from '../../core/synth/minimize';
import { SeededRandom } from '../../core/util/prng';
import { fragmentedFunction, randomCubeFunction } from '../minimize-reference';

interface EspressoBinding {
  minimize(lines: string[]): string[];
}

function loadEspresso(): EspressoBinding | string {
  try {
    return createRequire(import.meta.url)('espresso-logic-minimizer') as EspressoBinding;
  } catch (e) {
    return e instanceof Error ? e.message : String(e);
  }
}

function timed(f: BoolFunction, exactLimit: number): { r: MinimizeResult; ms: number } {
  const t0 = performance.now();
  const r = minimize(f, { exactLimit });
  return { r, ms: performance.now() - t0 };
}

function espressoRun(esp: EspressoBinding, f: BoolFunction): { products: number; ms: number } {
  const lines = [`.i ${f.inputs}`, '.o 1', '.type fd', ...f.on.map((c) => `${c} 1`), ...f.dc.map((c) => `${c} -`), '.e'];
  const t0 = performance.now();
  const out = f.on.length === 0 ? [] : esp.minimize(lines);
  return { products: out.length, ms: performance.now() - t0 };
}

/**
 * Next-state bit functions of a random controller: `states` binary-coded states (unused codes
 * are don't-cares), `inputs` controller inputs, each state branching on one or two inputs.
 */
function controllerFunctions(rng: SeededRandom, states: number, inputs: number): BoolFunction[] {
  const width = Math.max(1, Math.ceil(Math.log2(states)));
  const code = (s: number): string => Array.from({ length: width }, (_, i) => ((s >> (width - 1 - i)) & 1 ? '1' : '0')).join('');
  const rows: { from: string; cube: string; to: string }[] = [];
  for (let s = 0; s < states; s++) {
    const tested: number[] = [];
    const branches = 1 + rng.below(2);
    while (tested.length < branches) {
      const i = rng.below(inputs);
      if (!tested.includes(i)) tested.push(i);
    }
    for (let m = 0; m < 1 << tested.length; m++) {
      const cube = Array.from({ length: inputs }, () => '-');
      tested.forEach((i, j) => (cube[i] = (m >> j) & 1 ? '1' : '0'));
      rows.push({ from: code(s), cube: cube.join(''), to: code(rng.below(states)) });
    }
  }
  const dc: string[] = [];
  for (let s = states; s < 1 << width; s++) dc.push(code(s) + '-'.repeat(inputs));
  return Array.from({ length: width }, (_, b) => ({
    inputs: width + inputs,
    on: rows.filter((r) => r.to[b] === '1').map((r) => r.from + r.cube),
    dc,
  }));
}

function fmtCost(r: MinimizeResult): string {
  return `${r.cost.products}p/${r.cost.literals}l`;
}

export async function benchMinimize(): Promise<string> {
  const esp = loadEspresso();
  const lines = ['Two-level minimizer (one core; p = product terms, l = literals; times per function)'];
  if (typeof esp === 'string') lines.push(`  (Espresso reference not loaded: ${esp})`);
  const header = `  ${'function'.padEnd(36)} ${'exact'.padStart(20)} ${'heuristic'.padStart(20)} ${'Espresso'.padStart(16)}`;
  lines.push(header);
  const rng = new SeededRandom(8_12_16);
  const row = (label: string, f: BoolFunction, tryExact: boolean): void => {
    const h = timed(f, -1);
    let exactText = '-';
    if (tryExact) {
      const e = timed(f, f.inputs);
      exactText = e.r.method === 'exact' ? `${fmtCost(e.r)} ${e.ms.toFixed(0)} ms` : `gave up ${e.ms.toFixed(0)} ms`;
    }
    let espText = '-';
    if (typeof esp !== 'string') {
      const e = espressoRun(esp, f);
      espText = `${e.products}p ${e.ms.toFixed(0)} ms`;
    }
    lines.push(`  ${label.padEnd(36)} ${exactText.padStart(20)} ${`${fmtCost(h.r)} ${h.ms.toFixed(0)} ms`.padStart(20)} ${espText.padStart(16)}`);
  };

  for (const n of [8, 12, 16, 20, 24]) {
    for (let k = 0; k < 2; k++) {
      const f = randomCubeFunction(rng, n, 4 * n, n / 2, 0.45);
      row(`${n} in, random ${f.on.length} cubes #${k + 1}`, f, n <= 12);
    }
    const g = fragmentedFunction(rng, n, 2 * n, 3, 0.5, n / 2);
    row(`${n} in, fragmented ${g.on.length} cubes`, g, n <= 12);
  }

  const controller = controllerFunctions(rng, 24, 7);
  const t0 = performance.now();
  let worstMs = 0;
  const costs: string[] = [];
  for (const f of controller) {
    const { r, ms } = timed(f, 12);
    worstMs = Math.max(worstMs, ms);
    costs.push(`${r.method} ${fmtCost(r)}`);
  }
  lines.push(
    `  controller, 24 states (5 bits) + 7 inputs = 12 in: ${controller.length} next-state bits in ${(performance.now() - t0).toFixed(0)} ms, ` +
      `slowest ${worstMs.toFixed(0)} ms (goal: about 1 s per 12-input function) [${costs.join(', ')}]`,
  );

  const n = 24;
  const winner = (i: number): string => '0'.repeat(i) + '1' + '-'.repeat(n - 1 - i);
  for (let b = 0; b < 5; b++) {
    const on: string[] = [];
    for (let i = 0; i < n; i++) if ((i >> b) & 1) on.push(winner(i));
    row(`24-in priority encoder, index bit ${b}`, { inputs: n, on, dc: [] }, false);
  }
  return lines.join('\n');
}
