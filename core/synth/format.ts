// Plain-text reports of a synthesis: datapath components, control signals, transition table,
// encoding table, equations with their cost, and the side-by-side comparison of encodings.
import type { BitType } from '../ir/schema';
import type { ControllerOutput, EncodingComparison, Equation, Source, Synthesis } from './schema';

function typeText(t: BitType): string {
  return t.width === 1 && !t.signed ? 'bit' : `${t.signed ? 's' : 'u'}${t.width}`;
}

/** Left-aligned columns; the last column is not padded. */
function columns(rows: readonly string[][], indent = '  '): string[] {
  const widths: number[] = [];
  for (const r of rows) r.forEach((c, i) => (widths[i] = Math.max(widths[i] ?? 0, c.length)));
  return rows.map((r) => indent + r.map((c, i) => (i === r.length - 1 ? c : c.padEnd(widths[i]))).join('  ').trimEnd());
}

function sourceText(s: Source): string {
  return `${s.text} (${s.from})`;
}

function stateList(states: readonly number[], names: readonly string[]): string {
  return states.map((s) => names[s]).join(', ');
}

function roleText(o: ControllerOutput): string {
  if (o.role === 'output') return 'design output';
  if (o.role === 'load') return `load enable of ${o.drives}`;
  return `select bit ${o.bit} of ${o.drives}`;
}

function plural(n: number, word: string): string {
  return `${n} ${word}${n === 1 ? '' : 's'}`;
}

function equationLines(eqs: readonly Equation[]): string[] {
  return columns(eqs.map((e) => [e.text, `[${plural(e.cost.products, 'product')}, ${plural(e.cost.literals, 'literal')}, ${e.method}]`]));
}

export function formatSynthesis(s: Synthesis): string {
  const out: string[] = [];
  const dp = s.datapath;
  const enc = s.encoding;
  out.push(`${s.machine}: controller/datapath synthesis, ${enc.kind} encoding`, '');

  out.push('Datapath');
  out.push('  registers');
  if (dp.registers.length === 0) out.push('    (none)');
  out.push(
    ...columns(
      dp.registers.map((r) => {
        const load = r.loadEnable ? `load ${r.loadEnable}` : 'never loaded';
        const src = r.sources.length === 0 ? `keeps reset value ${r.resetBits}` : r.select.length === 0 ? `<- ${sourceText(r.sources[0])}` : `select ${r.select.join(',')}: ${r.sources.map((x, i) => `${i} = ${sourceText(x)}`).join('; ')}`;
        return [r.register, typeText(r.type), load, src];
      }),
      '    ',
    ),
  );
  out.push('  data outputs');
  if (dp.outputs.length === 0) out.push('    (none: every output comes from the controller)');
  out.push(
    ...columns(
      dp.outputs.map((o) => [o.output, typeText(o.type), o.select.length === 0 ? `= ${sourceText(o.sources[0])}` : `select ${o.select.join(',')}: ${o.sources.map((x, i) => `${i} = ${sourceText(x)}`).join('; ')}`]),
      '    ',
    ),
  );
  out.push(`  functional units: ${dp.units.length} (${dp.unitCount.unshared} unshared, ${dp.unitCount.shared} with sharing; ${dp.shareUnits ? 'shared' : 'not shared'})`);
  const opById = new Map(dp.operations.map((o) => [o.id, o]));
  out.push(
    ...columns(
      dp.units.map((u) => {
        const ops = u.operations.map((id) => opById.get(id)!);
        const muxes = u.portSources.some((n) => n > 1) ? `  operand mux ${u.portSources.join('/')}` : '';
        return [u.name, u.kind, `${u.width} bits`, ops.map((o) => `${o.text} in ${stateList(o.states, s.states)}`).join('; ') + muxes];
      }),
      '    ',
    ),
  );
  out.push('  status signals');
  if (dp.statusSignals.length === 0) out.push('    (none)');
  out.push(...columns(dp.statusSignals.map((x) => [x.name, x.kind, x.text, x.unit ? `from ${x.unit}` : 'wiring', `tested in ${stateList(x.states, s.states)}`]), '    '));
  out.push('');

  out.push('Controller');
  out.push('  inputs (table cube columns, left to right)');
  if (s.controller.inputs.length === 0) out.push('    (none)');
  out.push(...columns(s.controller.inputs.map((x, i) => [String(i + 1), x.name, x.from === 'input' ? 'design input' : 'status signal']), '    '));
  out.push('  outputs (table output columns, left to right)');
  if (s.controller.outputs.length === 0) out.push('    (none)');
  out.push(...columns(s.controller.outputs.map((x, i) => [String(i + 1), x.name, roleText(x)]), '    '));
  out.push('  transition table (t1, t2 ... = transitions in priority order; stay = none fires)');
  const header = ['state', 'inputs', 'next', 'path', 'outputs'];
  out.push(
    ...columns(
      [header, ...s.controller.table.map((r) => [s.states[r.state], r.cube || '(none)', s.states[r.next], r.transition === null ? 'stay' : `t${r.transition + 1}`, r.outputs || '(none)'])],
      '    ',
    ),
  );
  out.push('');

  out.push(`State encoding: ${enc.kind}, ${enc.width} flip-flop${enc.width > 1 ? 's' : ''} (${enc.bits.join(' ')}), reset code ${enc.resetCode}`);
  out.push(...columns(s.states.map((name, i) => [name, enc.codes[i]]), '  '));
  const unused = enc.unusedCodes.length;
  out.push(`  unused codes (don't care): ${unused === 0 ? 'none' : unused <= 8 ? enc.unusedCodes.join(' ') : `${unused} cubes`}`);
  out.push('');

  out.push(`Equations (${s.form}; '·' AND, '+' OR, '/x' NOT x, "'" next state)`);
  out.push(...equationLines(s.equations));
  if (s.fullDecode) {
    out.push('');
    out.push('Full-decode alternative (every non-one-hot code a don\'t-care; the HDL uses the one-hot form above)');
    out.push(...equationLines(s.fullDecode));
  }
  for (const n of s.notes) out.push(`Note: ${n}`);
  out.push('');
  out.push(`Cost: ${plural(s.cost.flipFlops, 'flip-flop')}, ${plural(s.cost.products, 'product term')}, ${plural(s.cost.literals, 'literal')}, ${plural(s.cost.gates2, 'two-input gate')}`);
  return out.join('\n') + '\n';
}

export function formatComparison(c: EncodingComparison): string {
  const rows = c.rows.map((r) => (r.ok ? [r.encoding, String(r.flipFlops), String(r.products), String(r.literals), String(r.gates2)] : [r.encoding, '-', '-', '-', '-']));
  const all = [['encoding', 'flip-flops', 'products', 'literals', '2-input gates'], ...rows];
  const widths = all[0].map((_, i) => Math.max(...all.map((r) => r[i].length)));
  const lines = all.map((r) => '  ' + r.map((x, i) => (i === 0 ? x.padEnd(widths[i]) : x.padStart(widths[i]))).join('  '));
  // Each message already names its encoding; one-hot failures are not repeated for its full decode.
  const notes = [...new Set(c.rows.filter((r) => !r.ok).map((r) => `  ${r.error}`))];
  return [`${c.machine}: state encodings compared (controller equations only)`, ...lines, ...(notes.length ? ['', ...notes] : [])].join('\n') + '\n';
}
