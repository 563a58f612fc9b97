// Runs a model over a stimulus and records what happened each cycle, in a form every view shares
// (CLI table, JSON lines, the app's waveform, HDL testbench expectations).
import type { Machine } from '../ir/schema';
import { formatValue } from '../util/bits';
import { compileModel, fromRep, toRep, type RepValue } from './compiled';
import { interpreter } from './interpreter';

export interface TraceRow {
  cycle: number;
  /** Inputs as the controller saw them this cycle (machine.inputs order). */
  inputs: bigint[];
  /** State index during this cycle. */
  state: number;
  /** Register values during this cycle, before the clock edge that ends it. */
  regs: bigint[];
  /** Output values during this cycle. */
  outputs: bigint[];
  /** Transition fired at the end of this cycle (index within the state), -1 for the implicit stay. */
  fired: number;
}

export type Engine = 'compiled' | 'interpreter';

/** Simulates `cycles` cycles (default: one per stimulus row) from reset. */
export function simulate(m: Machine, rows: bigint[][], cycles = rows.length, engine: Engine = 'compiled'): TraceRow[] {
  const trace: TraceRow[] = [];
  if (rows.length === 0 && m.inputs.length > 0) return trace;
  const rowAt = (c: number) => (rows.length ? rows[c % rows.length] : []);
  if (engine === 'interpreter') {
    const model = interpreter(m);
    let s = model.reset();
    for (let c = 0; c < cycles; c++) {
      const inputs = rowAt(c);
      const r = model.step(s, inputs);
      trace.push({ cycle: c, inputs: inputs.slice(), state: s.state, regs: s.regs, outputs: r.outputs, fired: r.fired });
      s = r.next;
    }
    return trace;
  }
  const model = compileModel(m);
  const out: RepValue[] = new Array(m.outputs.length);
  for (let c = 0; c < cycles; c++) {
    const inputs = rowAt(c);
    const state = model.state();
    const regs = model.regs().map(fromRep);
    const fired = model.step(inputs.map((v, k) => toRep(v, m.inputs[k].type.width)), out);
    trace.push({ cycle: c, inputs: inputs.slice(), state, regs, outputs: out.map(fromRep), fired });
  }
  return trace;
}

export type Radix = 'dec' | 'hex' | 'bin';

/** One JSON object per cycle, values as numbers when safe and strings otherwise, named by signal. */
export function traceRowJson(m: Machine, row: TraceRow): Record<string, unknown> {
  const val = (bits: bigint, t: { width: number; signed: boolean }) => {
    const s = formatValue(bits, t.width, t.signed);
    const n = Number(s);
    return Number.isSafeInteger(n) ? n : s;
  };
  return {
    cycle: row.cycle,
    state: m.states[row.state].name,
    inputs: Object.fromEntries(m.inputs.map((x, i) => [x.name, val(row.inputs[i], x.type)])),
    regs: Object.fromEntries(m.registers.map((x, i) => [x.name, val(row.regs[i], x.type)])),
    outputs: Object.fromEntries(m.outputs.map((x, i) => [x.name, val(row.outputs[i], x.type)])),
    next: row.fired >= 0 ? m.states[m.states[row.state].transitions[row.fired].target].name : m.states[row.state].name,
  };
}

/** An aligned text table: cycle, inputs, state name, registers, outputs. */
export function formatTraceTable(m: Machine, rows: TraceRow[], radix: Radix = 'dec'): string {
  const header = ['cycle', ...m.inputs.map((i) => i.name), 'state', ...m.registers.map((r) => r.name), ...m.outputs.map((o) => o.name)];
  const body = rows.map((r) => [
    String(r.cycle),
    ...m.inputs.map((x, i) => formatValue(r.inputs[i], x.type.width, x.type.signed, x.type.width === 1 ? 'dec' : radix)),
    m.states[r.state].name,
    ...m.registers.map((x, i) => formatValue(r.regs[i], x.type.width, x.type.signed, radix)),
    ...m.outputs.map((x, i) => formatValue(r.outputs[i], x.type.width, x.type.signed, x.type.width === 1 ? 'dec' : radix)),
  ]);
  const widths = header.map((h, c) => Math.max(h.length, ...body.map((b) => b[c].length)));
  const fmt = (cells: string[]) => cells.map((c, k) => (k === m.inputs.length + 1 ? c.padEnd(widths[k]) : c.padStart(widths[k]))).join('  ');
  const groupRule = widths.map((w) => '-'.repeat(w)).join('  ');
  return [fmt(header), groupRule, ...body.map(fmt)].join('\n') + '\n';
}
