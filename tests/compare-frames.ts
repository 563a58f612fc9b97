// Test support for the comparator, capture and export tests: an independent board built from the bigint
// interpreter (with faults injected by editing values), and its probe stream built with the protocol's
// frame encoder. None of this uses the comparator's own code.
import { evalExpr } from '../core/ir/eval';
import type { Machine } from '../core/ir/schema';
import { interpreter, resetState, type ModelState } from '../core/model/interpreter';
import { probeLayout, type ProbeLayout } from '../core/probe/layout';
import { encodeCycleFrame, encodeIdFrame, LAYOUT_VERSION } from '../core/protocol/frame';
import { synthesize } from '../core/synth/index';
import type { EncodingKind, Synthesis } from '../core/synth/schema';
import { createComparator } from '../core/compare/comparator';
import type { Verdict } from '../core/compare/verdict';
import { loadFixture } from './support/load';

export interface Design {
  m: Machine;
  rows: bigint[][];
  syn: Synthesis;
  layout: ProbeLayout;
}

export function design(name: string, encoding: EncodingKind = 'binary'): Design {
  const { machine: m, rows } = loadFixture(name);
  return prepared(m, rows, encoding);
}

export function prepared(m: Machine, rows: bigint[][], encoding: EncodingKind = 'binary'): Design {
  const syn = synthesize(m, { encoding });
  if (!syn.ok) throw new Error(syn.error);
  const layout = probeLayout(m, syn.result);
  if (!layout.ok) throw new Error(layout.error);
  return { m, rows, syn: syn.result, layout: layout.layout };
}

export type BoardFault =
  /** From cycle `from` on, bit `bit` of register `reg` reads `value` (and the logic computes with it). */
  | { kind: 'stuck'; reg: string; bit: number; value: 0 | 1; from: number }
  /** At exactly cycle `at` the machine goes to state index `to` instead of its computed next state. */
  | { kind: 'jump'; at: number; to: number }
  /** In cycle `at` bit `bit` of register `reg` is inverted (an upset flip-flop), and the logic goes on from it. */
  | { kind: 'flip'; reg: string; bit: number; at: number }
  /** The reset does not reach register `reg`: it starts from `value` instead of its reset value. */
  | { kind: 'no-reset'; reg: string; value: bigint };

/** One cycle as the board would report it: field values in layout order, and the model state behind it. */
export interface BoardCycle {
  values: bigint[];
  state: number;
  /** The state the machine computed for the next cycle before any fault. */
  computedNext: number;
}

/**
 * A board that runs the machine with the reference interpreter from reset, one row per cycle, applying the
 * faults. Field values follow the probe's field order: inputs, state code, registers, status, 1-bit outputs.
 */
export function runBoard(d: Design, rows: bigint[][], faults: BoardFault[] = []): BoardCycle[] {
  const { m, syn, layout } = d;
  const model = interpreter(m);
  const regIndex = new Map(m.registers.map((r, i) => [r.name, i]));
  const inputIndex = new Map(m.inputs.map((r, i) => [r.name, i]));
  let s: ModelState = resetState(m);
  for (const f of faults) if (f.kind === 'no-reset') s.regs[regIndex.get(f.reg)!] = f.value;
  const out: BoardCycle[] = [];
  for (let k = 0; k < rows.length; k++) {
    const regs = s.regs.slice();
    for (const f of faults) {
      if (f.kind === 'flip' && f.at === k) regs[regIndex.get(f.reg)!] ^= 1n << BigInt(f.bit);
      if (f.kind !== 'stuck' || k < f.from) continue;
      const i = regIndex.get(f.reg)!;
      regs[i] = f.value ? regs[i] | (1n << BigInt(f.bit)) : regs[i] & ~(1n << BigInt(f.bit));
    }
    s = { state: s.state, regs };
    const inputs = rows[k];
    const env = { input: (n: string) => inputs[inputIndex.get(n)!], reg: (n: string) => regs[regIndex.get(n)!] };
    const r = model.step(s, inputs);
    const values = layout.fields.map((f) => {
      switch (f.kind) {
        case 'input':
          return inputs[inputIndex.get(f.source)!];
        case 'state':
          return BigInt(parseInt(syn.encoding.codes[s.state], 2));
        case 'register':
          return regs[regIndex.get(f.source)!];
        case 'status':
          return evalExpr(syn.datapath.statusSignals.find((x) => x.name === f.source)!.expr, env);
        case 'output':
          return r.outputs[m.outputs.findIndex((o) => o.name === f.source)];
      }
    });
    let next = r.next;
    for (const f of faults) if (f.kind === 'jump' && f.at === k) next = { state: f.to, regs: next.regs };
    out.push({ values, state: s.state, computedNext: r.next.state });
    s = next;
  }
  return out;
}

export interface StreamOptions {
  /** Start with the identification frame a board sends after reset (default true). */
  reset?: boolean;
  /** Cycles whose frames are left out. */
  drop?: Set<number>;
  /** Replace a frame's wire bytes (e.g. to corrupt one byte). */
  mangle?: (cycle: number, wire: Uint8Array) => Uint8Array;
  fingerprint?: number;
}

/** The probe's byte stream for these cycles: identification frames as the protocol document says, then cycle frames. */
export function probeStream(layout: ProbeLayout, cycles: BoardCycle[], opts: StreamOptions = {}): Uint8Array {
  const parts: Uint8Array[] = [];
  const fingerprint = opts.fingerprint ?? layout.fingerprint;
  cycles.forEach((c, k) => {
    // An identification frame before the first frame after reset and before every frame whose counter is 0.
    if ((k === 0 && opts.reset !== false) || k % 128 === 0) {
      parts.push(encodeIdFrame({ fingerprint, layoutVersion: LAYOUT_VERSION, payloadBits: layout.frame.payloadBits, nextCounter: k % 128, afterReset: k === 0 && opts.reset !== false }));
    }
    if (opts.drop?.has(k)) return;
    const wire = encodeCycleFrame(layout.frame, k, c.values);
    parts.push(opts.mangle ? opts.mangle(k, wire) : wire);
  });
  return concat(parts);
}

export function concat(parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

/** Run the comparator over a stream cut into the given chunk sizes (cycled), returning every verdict. */
export function compare(d: Design, stream: Uint8Array, chunks: number[] = [stream.length || 1]): Verdict[] {
  const verdicts: Verdict[] = [];
  const c = createComparator({ machine: d.m, synthesis: d.syn, layout: d.layout, onVerdict: (v) => verdicts.push(v) });
  if (!c.ok) throw new Error(c.error);
  let at = 0;
  for (let i = 0; at < stream.length; i++) {
    const n = Math.max(1, chunks[i % chunks.length]);
    c.comparator.push(stream.subarray(at, at + n));
    at += n;
  }
  c.comparator.finish();
  return verdicts;
}

export function divergences(vs: Verdict[]) {
  return vs.flatMap((v) => (v.kind === 'divergence' ? [v] : []));
}

export function summaryOf(vs: Verdict[]) {
  const s = vs.find((v) => v.kind === 'summary');
  if (!s || s.kind !== 'summary') throw new Error('no summary verdict');
  return s;
}
