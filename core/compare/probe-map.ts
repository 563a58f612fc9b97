// Where each signal of the machine sits in a probe frame, and how to read field values out of the raw
// frame bytes: the bridge between the probe's field list and the machine's inputs, registers and outputs.
import type { Machine } from '../ir/schema';
import type { ProbeLayout } from '../probe/layout';
import type { StatusSignal, Synthesis } from '../synth/schema';

export interface ProbeMap {
  /** Field index of each machine input, in machine.inputs order. */
  inputs: number[];
  state: number;
  /** Field index of each machine register, in machine.registers order. */
  registers: number[];
  statuses: { field: number; signal: StatusSignal }[];
  /** The 1-bit outputs the frame carries: field index and index in machine.outputs. */
  outputs: { field: number; output: number }[];
  /** State index by code (binary value of the code string); codes no state has are absent. */
  stateByCode: Map<number, number>;
  stateWidth: number;
}

export type ProbeMapResult = { ok: true; map: ProbeMap } | { ok: false; error: string };

/** Resolve the layout's fields against the machine and synthesis; fails when they do not belong together. */
export function probeMap(m: Machine, syn: Synthesis, layout: ProbeLayout): ProbeMapResult {
  const fields = layout.fields;
  const find = (kind: string, source: string) => fields.findIndex((f) => f.kind === kind && f.source === source);
  const missing: string[] = [];
  const need = (kind: string, source: string) => {
    const i = find(kind, source);
    if (i < 0) missing.push(`${kind} ${source}`);
    return i;
  };
  const inputs = m.inputs.map((x) => need('input', x.name));
  const state = need('state', 'state');
  const registers = m.registers.map((x) => need('register', x.name));
  const statuses = syn.datapath.statusSignals.map((s) => ({ field: need('status', s.name), signal: s }));
  const outputs = m.outputs.flatMap((o, output) => (o.type.width === 1 ? [{ field: need('output', o.name), output }] : []));
  if (missing.length) return { ok: false, error: `the probe layout does not carry ${missing.join(', ')} of machine '${m.name}'` };
  if (state >= 0 && fields[state].width !== syn.encoding.width) {
    return { ok: false, error: `the probe's state field is ${fields[state].width} bits but the ${syn.encoding.kind} encoding has ${syn.encoding.width}` };
  }
  if (syn.encoding.width > 32) return { ok: false, error: `state codes of ${syn.encoding.width} bits are beyond what the comparator reads (32)` };
  const stateByCode = new Map<number, number>();
  syn.encoding.codes.forEach((c, i) => stateByCode.set(parseInt(c, 2), i));
  return { ok: true, map: { inputs, state, registers, statuses, outputs, stateByCode, stateWidth: syn.encoding.width } };
}

/**
 * JavaScript source reading a field of `width` bits at payload bit `offset` from `raw` (payload from byte 1),
 * LSB-first as the protocol packs it. Widths up to 32 give a number, wider ones a bigint (via `readBig`).
 */
export function fieldReadSource(raw: string, offset: number, width: number): string {
  if (width > 32) return `readBig(${raw}, ${offset}, ${width})`;
  const first = 1 + (offset >>> 3);
  const shift = offset & 7;
  const nbytes = Math.ceil((shift + width) / 8);
  const low: string[] = [];
  for (let k = 0; k < Math.min(nbytes, 4); k++) low.push(k === 0 ? `${raw}[${first}]` : `(${raw}[${first + k}] << ${8 * k})`);
  let word = low.length === 1 ? low[0] : `(${low.join(' | ')})`;
  if (shift) word = `(${word} >>> ${shift})`;
  if (nbytes === 5) word = `(${word} | (${raw}[${first + 4}] << ${32 - shift}))`;
  if (width === 32) return `(${word} >>> 0)`;
  const covered = nbytes * 8 - shift;
  return covered === width && nbytes < 4 ? word : `(${word} & ${2 ** width - 1})`;
}

/** Bigint read of any field, for widths beyond 32 bits and for the reference path. */
export function readBig(raw: Uint8Array, offset: number, width: number): bigint {
  let v = 0n;
  const firstByte = 1 + (offset >>> 3);
  const lastByte = 1 + ((offset + width - 1) >>> 3);
  for (let b = lastByte; b >= firstByte; b--) v = (v << 8n) | BigInt(raw[b] ?? 0);
  return (v >> BigInt(offset & 7)) & ((1n << BigInt(width)) - 1n);
}
