// Folds a model trace (bigint rows) into waveform tracks: the plain reference for the change lists that
// core/services/fastsim.ts builds on the fly, which the tests hold the fast path to.
import type { Machine } from '../../core/ir/schema';
import type { TraceRow } from '../../core/model/trace';
import type { Track } from '../../core/services/api';

interface Builder {
  track: Track;
  last: bigint | null;
}

function builder(name: string, group: Track['group'], width: number, signed: boolean): Builder {
  return { track: { name, group, width, signed, at: [], values: [] }, last: null };
}

/** Decimal text of small values, made once: most changes are of 1-bit and byte-wide signals. */
const SMALL = Array.from({ length: 256 }, (_, i) => String(i));

function push(b: Builder, cycle: number, value: bigint): void {
  if (b.last === value) return;
  b.last = value;
  b.track.at.push(cycle);
  b.track.values.push(value < 256n ? SMALL[Number(value)] : value.toString());
}

/** Tracks in display order: inputs, the state, registers, outputs. */
export function traceToTracks(m: Machine, rows: readonly TraceRow[]): Track[] {
  const stateBits = Math.max(1, Math.ceil(Math.log2(Math.max(2, m.states.length))));
  const ins = m.inputs.map((x) => builder(x.name, 'input', x.type.width, x.type.signed));
  const state = builder('state', 'state', stateBits, false);
  const regs = m.registers.map((x) => builder(x.name, 'register', x.type.width, x.type.signed));
  const outs = m.outputs.map((x) => builder(x.name, 'output', x.type.width, x.type.signed));
  for (const r of rows) {
    for (let i = 0; i < ins.length; i++) push(ins[i], r.cycle, r.inputs[i]);
    push(state, r.cycle, BigInt(r.state));
    for (let i = 0; i < regs.length; i++) push(regs[i], r.cycle, r.regs[i]);
    for (let i = 0; i < outs.length; i++) push(outs[i], r.cycle, r.outputs[i]);
  }
  return [...ins, state, ...regs, ...outs].map((b) => b.track);
}
