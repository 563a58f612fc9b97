// Lockstep comparison: the probe's byte stream in, verdicts out. Each frame is checked against what the
// model predicts from the board's own previous frame, so after a divergence the comparison carries on
// from the board's values and every independent divergence of a run is listed.
import type { Machine } from '../ir/schema';
import type { ProbeLayout } from '../probe/layout';
import type { DecodeErrorKind, DecoderStats } from '../protocol/decoder';
import { rawCycleFrameLength, type IdInfo } from '../protocol/frame';
import type { Synthesis } from '../synth/schema';
import { formatValue } from '../util/bits';
import { StreamDecoder, type FrameSink } from '../decode/stream';
import { Diagnoser, linkHint } from './diagnose';
import { bitList, Explainer, type ExplainContext } from './explain';
import { compileKernel, KERNEL_ILLEGAL_STATE, type Kernel } from './kernel';
import { probeMap, type ProbeMap } from './probe-map';
import { frameValues, referenceModel, type Basis, type ReferenceModel } from './reference';
import type { DivergenceVerdict, SummaryVerdict, Verdict } from './verdict';

/** One frame as the board sent it and as the model expected it (for waveform export). */
export interface FrameObservation {
  cycle: number;
  /** Field values in layout order. */
  board: bigint[];
  /** Expected value per field; null where the model makes no claim. */
  expected: (bigint | null)[];
  /** Fields that diverge in this frame. */
  diverged: number[];
  /** First frame after a reset the board announced. */
  afterReset: boolean;
  /** Frames were lost just before this one. */
  afterGap: boolean;
}

export interface ComparatorOptions {
  machine: Machine;
  synthesis: Synthesis;
  layout: ProbeLayout;
  onVerdict: (v: Verdict) => void;
  /** Called for every cycle frame, with expectations; costs the reference path on every frame. */
  onFrame?: (f: FrameObservation) => void;
  /** Ignore bytes up to the first 0x00 (a port opened mid-frame). */
  waitForDelimiter?: boolean;
}

export type ComparatorResult = { ok: true; comparator: Comparator } | { ok: false; error: string };

/** Live figures for a status line. */
export interface Progress {
  bytes: number;
  cycleFrames: number;
  lastCycle: number;
  divergences: number;
  crcErrors: number;
  framingErrors: number;
  droppedFrames: number;
  /** Resets the board announced (cycle numbers count from the last one). */
  resets: number;
}

/** Frames kept for the two-cycle look-back (previous frame is the basis, the one before it for input changes). */
const HISTORY = 4;
const BASIS_NONE = 0;
const BASIS_RESET = 1;
const BASIS_FRAME = 2;

export function createComparator(opts: ComparatorOptions): ComparatorResult {
  const pm = probeMap(opts.machine, opts.synthesis, opts.layout);
  if (!pm.ok) return pm;
  return { ok: true, comparator: new Comparator(opts, pm.map) };
}

export class Comparator implements FrameSink {
  private readonly decoder: StreamDecoder;
  private readonly kernel: Kernel;
  private readonly ref: ReferenceModel;
  private readonly explainer: Explainer;
  private readonly diagnoser: Diagnoser;
  private readonly rawLength: number;
  private readonly history: Uint8Array;
  private readonly historyCycle = new Float64Array(HISTORY).fill(-2);
  private head = 0;
  /** What the next prediction rests on: BASIS_NONE, BASIS_RESET or BASIS_FRAME (numbers: this is the hot path). */
  private basis = BASIS_NONE;
  private readonly observe: boolean;
  private nextCycle = -1;
  private lastCycle = -1;
  private resetCycle: number | null = null;
  private lastId: { fingerprint: number; mismatch: string | undefined } | null = null;
  private readonly tally = { divergences: 0, divergentCycles: 0, gaps: 0, resets: 0 };
  private comparedFrames = 0;
  private gapPending = false;
  private finished: SummaryVerdict | null = null;

  constructor(
    private readonly opts: ComparatorOptions,
    private readonly map: ProbeMap,
  ) {
    const { machine, synthesis, layout } = opts;
    this.kernel = compileKernel(machine, layout.frame, map);
    this.ref = referenceModel(machine, map);
    this.explainer = new Explainer(machine, synthesis, map);
    this.diagnoser = new Diagnoser(machine);
    this.rawLength = rawCycleFrameLength(layout.frame);
    this.observe = opts.onFrame !== undefined;
    this.history = new Uint8Array(HISTORY * this.rawLength);
    this.decoder = new StreamDecoder(layout.frame, this, { expectedFingerprint: layout.fingerprint, waitForDelimiter: opts.waitForDelimiter });
  }

  /** Feed received bytes in chunks of any size. Never throws on stream content. */
  push(bytes: Uint8Array): void {
    this.decoder.push(bytes);
  }

  get decoderStats(): Readonly<DecoderStats> {
    return this.decoder.stats;
  }

  progress(): Progress {
    const s = this.decoder.stats;
    return { bytes: s.bytes, cycleFrames: s.cycleFrames, lastCycle: this.lastCycle, divergences: this.tally.divergences, crcErrors: s.crcErrors, framingErrors: s.framingErrors, droppedFrames: s.droppedFrames, resets: this.tally.resets };
  }

  /** End of the stream: emits the hints and the summary (once) and returns the summary. */
  finish(): SummaryVerdict {
    if (this.finished) return this.finished;
    const s = this.decoder.stats;
    const changes = this.kernel.inputChanges();
    const rates = new Map(this.opts.machine.inputs.map((x, k) => [x.name, s.cycleFrames > 0 ? changes[k] / s.cycleFrames : 0]));
    for (const h of this.diagnoser.hints(this.comparedFrames, rates)) this.opts.onVerdict(h);
    const link = linkHint(s.cycleFrames + s.idFrames, s.crcErrors + s.framingErrors);
    if (link) this.opts.onVerdict(link);
    const summary: SummaryVerdict = {
      kind: 'summary',
      outcome: this.tally.divergences > 0 ? 'diverged' : s.cycleFrames === 0 ? 'no-frames' : 'agree',
      bytes: s.bytes,
      cycleFrames: s.cycleFrames,
      idFrames: s.idFrames,
      comparedFrames: this.comparedFrames,
      divergences: this.tally.divergences,
      divergentCycles: this.tally.divergentCycles,
      gaps: this.tally.gaps,
      droppedFrames: s.droppedFrames,
      crcErrors: s.crcErrors,
      framingErrors: s.framingErrors,
      idMismatches: s.idMismatches,
      resets: this.tally.resets,
      lastCycle: this.lastCycle,
    };
    this.finished = summary;
    this.opts.onVerdict(summary);
    return summary;
  }

  // FrameSink: called by the decoder, in stream order.

  cycle(counter: number, raw: Uint8Array, offset: number): void {
    // Without a reset in the stream the cycle number is only known modulo 128; start from the counter.
    const cycle = this.nextCycle < 0 ? counter : this.nextCycle;
    this.nextCycle = cycle + 1;
    this.lastCycle = cycle;
    if (this.basis !== BASIS_NONE) this.comparedFrames++;
    const flags = this.kernel.check(raw);
    if (flags !== 0 || this.observe) this.reference(raw, cycle, offset, (flags & KERNEL_ILLEGAL_STATE) !== 0);
    this.basis = flags & KERNEL_ILLEGAL_STATE ? BASIS_NONE : BASIS_FRAME;
    this.gapPending = false;
    // Keep this frame for the look-back (payload only: the CRC has done its job).
    const slot = this.head;
    const history = this.history;
    const len = this.rawLength;
    for (let k = 0, at = slot * len; k < len - 2; k++, at++) history[at] = raw[k];
    this.historyCycle[slot] = cycle;
    this.head = slot + 1 === HISTORY ? 0 : slot + 1;
  }

  id(info: IdInfo, mismatch: string | undefined, offset: number): void {
    if (info.afterReset) {
      this.kernel.expectReset();
      this.basis = BASIS_RESET;
      this.nextCycle = 0;
      this.resetCycle = 0;
      this.tally.resets++;
    }
    // Periodic identification frames that say nothing new are not verdicts.
    const changed = !this.lastId || this.lastId.fingerprint !== info.fingerprint || this.lastId.mismatch !== mismatch;
    this.lastId = { fingerprint: info.fingerprint, mismatch };
    if (info.afterReset || changed || mismatch) {
      const v = { kind: 'identity' as const, fingerprint: info.fingerprint.toString(16).padStart(8, '0'), afterReset: info.afterReset, mismatch: mismatch ?? null, offset };
      this.diagnoser.noteIdentity(v);
      if (info.afterReset || changed) this.opts.onVerdict(v);
    }
  }

  gap(missing: number, _expected: number, _got: number, offset: number): void {
    this.kernel.forget();
    this.basis = BASIS_NONE;
    this.gapPending = true;
    this.tally.gaps++;
    const first = this.nextCycle < 0 ? this.lastCycle + 1 : this.nextCycle;
    if (this.nextCycle >= 0) this.nextCycle += missing;
    this.opts.onVerdict({ kind: 'gap', cycle: first, missing, offset });
  }

  error(kind: DecodeErrorKind, message: string, offset: number): void {
    this.opts.onVerdict({ kind: 'decode-error', error: kind, message, afterCycle: this.lastCycle, offset });
  }

  /** Values of the frame `back` frames before the current one (1 = previous), if it is that cycle. */
  private historyValues(back: number, cycle: number): bigint[] | null {
    const slot = (this.head - back + HISTORY * 2) % HISTORY;
    if (this.historyCycle[slot] !== cycle - back) return null;
    return frameValues(this.opts.layout.frame, this.history.subarray(slot * this.rawLength, (slot + 1) * this.rawLength));
  }

  /** The slow path: find, explain and report every differing signal of this frame. */
  private reference(raw: Uint8Array, cycle: number, offset: number, illegal: boolean): void {
    const { machine: m, layout } = this.opts;
    const map = this.map;
    const values = frameValues(layout.frame, raw);
    const prev = this.basis === BASIS_FRAME ? this.historyValues(1, cycle) : null;
    const basis: Basis = this.basis === BASIS_RESET ? { kind: 'reset' } : prev ? { kind: 'frame', values: prev } : { kind: 'none' };
    const exp = this.ref.expect(basis, values);
    const diverged: number[] = [];
    exp.expected.forEach((e, f) => {
      if (e !== null && e !== values[f]) diverged.push(f);
    });
    if (illegal && !diverged.includes(map.state)) diverged.unshift(map.state);
    const sinceReset = this.resetCycle === null ? null : cycle - this.resetCycle;
    const found: DivergenceVerdict[] = [];
    if (diverged.length) {
      const prev2 = this.historyValues(2, cycle);
      const inputsChanged = m.inputs
        .filter((_, k) => {
          const f = map.inputs[k];
          return (prev && prev[f] !== values[f]) || (prev && prev2 && prev2[f] !== prev[f]);
        })
        .map((x) => x.name);
      const ctx: ExplainContext = { m, syn: this.opts.synthesis, map, ref: this.ref, prev, afterReset: basis.kind === 'reset', cur: values, exp };
      const boardName = this.explainer.stateName(exp.boardState, values[map.state]);
      const transition = basis.kind === 'none' ? null : { from: basis.kind === 'reset' ? 'reset' : this.explainer.stateName(exp.fromState, prev?.[map.state]), expected: exp.expectedState >= 0 ? this.explainer.stateName(exp.expectedState) : '?', board: boardName };
      for (const f of diverged) {
        const field = layout.fields[f];
        const expected = exp.expected[f];
        const width = field.width;
        const group = field.kind === 'state' ? 'state' : field.kind === 'register' ? 'register' : field.kind === 'status' ? 'status' : 'output';
        const fmt = (v: bigint) => {
          if (field.kind === 'state') return this.explainer.stateName(map.stateByCode.get(Number(v)) ?? -1, v);
          if (field.kind === 'register') {
            const r = m.registers.find((x) => x.name === field.source)!;
            return formatValue(v, r.type.width, r.type.signed);
          }
          return v.toString();
        };
        const explanation =
          group === 'state'
            ? this.explainer.explainState(ctx)
            : group === 'register'
              ? this.explainer.explainRegister(ctx, map.registers.indexOf(f))
              : group === 'status'
                ? this.explainer.explainStatus(ctx, map.statuses.findIndex((s) => s.field === f))
                : this.explainer.explainOutput(ctx, map.outputs.findIndex((o) => o.field === f));
        const v: DivergenceVerdict = {
          kind: 'divergence',
          cycle,
          sinceReset,
          signal: field.name,
          group,
          expected: expected === null ? 'a state code' : fmt(expected),
          actual: fmt(values[f]),
          expectedBits: expected === null ? '' : bin(expected, width),
          actualBits: bin(values[f], width),
          differingBits: expected === null ? [] : bitList(expected ^ values[f]),
          state: boardName,
          transition: group === 'state' || group === 'register' ? transition : null,
          explanation,
          inputsChanged,
          offset,
        };
        found.push(v);
      }
      this.tally.divergences += found.length;
      this.tally.divergentCycles++;
      for (const v of found) this.opts.onVerdict(v);
      this.diagnoser.noteCycle({ cycle, sinceReset, divergences: found, inputsChanged });
    }
    this.opts.onFrame?.({ cycle, board: values, expected: exp.expected, diverged, afterReset: basis.kind === 'reset', afterGap: this.gapPending });
  }
}

function bin(v: bigint, width: number): string {
  return v.toString(2).padStart(width, '0');
}
