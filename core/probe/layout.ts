// The probe's payload layout for one design: which signals every cycle frame carries, in a fixed
// order derived from the IR and the synthesis result, so the board, the emulator and the host agree.
import type { Machine } from '../ir/schema';
import type { Synthesis } from '../synth/schema';
import { fingerprint32 } from '../ir/fingerprint';
import { layoutProblems, makeLayout, type FrameField, type FrameLayout } from '../protocol/frame';

export type ProbeFieldKind = 'input' | 'state' | 'register' | 'status' | 'output';

export interface ProbeField extends FrameField {
  kind: ProbeFieldKind;
  /** Design name of the input, register or output; the status signal's name; 'state' for the state code. */
  source: string;
}

export interface ProbeLayout {
  fields: ProbeField[];
  frame: FrameLayout;
  /** First 32 bits of the design fingerprint, as the identification frame carries it. */
  fingerprint: number;
  /** State codes as numbers, by state index (the encoding the bitstream was built with). */
  stateCodes: number[];
  encoding: Synthesis['encoding']['kind'];
}

/**
 * Field order: the inputs as the controller saw them (after synchronizers), the state code, every
 * register, every status signal, then the 1-bit outputs; each group in declaration order.
 */
export function probeFields(m: Machine, syn: Synthesis): ProbeField[] {
  return [
    ...m.inputs.map((i) => ({ name: `in.${i.name}`, width: i.type.width, kind: 'input' as const, source: i.name })),
    { name: 'state', width: syn.encoding.width, kind: 'state' as const, source: 'state' },
    ...m.registers.map((r) => ({ name: `reg.${r.name}`, width: r.type.width, kind: 'register' as const, source: r.name })),
    ...syn.datapath.statusSignals.map((s) => ({ name: `status.${s.name}`, width: 1, kind: 'status' as const, source: s.name })),
    ...m.outputs.filter((o) => o.type.width === 1).map((o) => ({ name: `out.${o.name}`, width: 1, kind: 'output' as const, source: o.name })),
  ];
}

export type ProbeLayoutResult = { ok: true; layout: ProbeLayout } | { ok: false; error: string };

export function probeLayout(m: Machine, syn: Synthesis): ProbeLayoutResult {
  const fields = probeFields(m, syn);
  const problems = layoutProblems(fields);
  if (problems.length) {
    const bits = fields.reduce((a, f) => a + f.width, 0);
    return { ok: false, error: `the probe cannot carry this design: ${problems.join('; ')} (payload ${bits} bits)` };
  }
  return {
    ok: true,
    layout: { fields, frame: makeLayout(fields), fingerprint: fingerprint32(m), stateCodes: syn.encoding.codes.map((c) => parseInt(c, 2)), encoding: syn.encoding.kind },
  };
}
