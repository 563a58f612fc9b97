// A bench or replay session as the app shows it: the probe's bytes go through the comparator, and every frame
// becomes waveform samples (board value and model expectation per signal), divergences, log lines and counters.
import type { Machine } from '../ir/schema';
import type { Synthesis } from '../synth/schema';
import type { ProbeLayout } from '../probe/layout';
import { createComparator, type Comparator, type FrameObservation } from '../compare/comparator';
import { formatVerdict, type DivergenceVerdict, type HintVerdict, type Verdict } from '../compare/verdict';
import type { Counters, DivergenceView, HintView, SessionLogEntry, TrackAppend, TrackMeta } from './api';
import { valueString } from './fastsim';

export interface SessionOptions {
  machine: Machine;
  synthesis: Synthesis;
  layout: ProbeLayout;
  /** Samples kept for the waveform; beyond it counters and divergences go on, the waveform stops growing. */
  maxSamples?: number;
  /** Divergences kept for the list; the counter goes on beyond it. */
  maxDivergences?: number;
  /** Ignore bytes up to the first frame delimiter (a port opened in the middle of a frame). */
  waitForDelimiter?: boolean;
}

export interface SessionDelta {
  tracks: TrackAppend[];
  expected: TrackAppend[];
  divergences: DivergenceView[];
  log: SessionLogEntry[];
  counters: Counters;
  capped: boolean;
}

export interface SessionEnd {
  summary: string;
  hints: HintView[];
  counters: Counters;
}

export const DEFAULT_MAX_SAMPLES = 2_000_000;
export const DEFAULT_MAX_DIVERGENCES = 10_000;
/** Log lines kept between two drains; a line-noise storm must not grow the message without bound. */
const MAX_LOG_PER_DELTA = 200;

class Lane {
  at: number[] = [];
  values: string[] = [];
  last = '';
  from = 0;

  push(sample: number, v: string): void {
    if (v === this.last && this.at.length > 0) return;
    this.last = v;
    this.at.push(sample);
    this.values.push(v);
  }

  drain(): TrackAppend {
    const out = { at: this.at.slice(this.from), values: this.values.slice(this.from) };
    this.from = this.at.length;
    return out;
  }
}

/** Session tracks in probe-layout order: one per frame field, named as the design names the signal. */
export function sessionTrackMeta(m: Machine, layout: ProbeLayout): TrackMeta[] {
  return layout.fields.map((f) => {
    const signed = f.kind === 'input' ? (m.inputs.find((x) => x.name === f.source)?.type.signed ?? false) : f.kind === 'register' ? (m.registers.find((x) => x.name === f.source)?.type.signed ?? false) : false;
    return { name: f.source, group: f.kind, width: f.width, signed };
  });
}

export class SessionRecorder {
  readonly meta: TrackMeta[];
  readonly compared: boolean[];
  readonly stateNames: string[];
  private readonly comparator: Comparator;
  private readonly board: Lane[];
  private readonly expected: Lane[];
  private readonly stateField: number;
  private readonly stateIndex: Map<number, number>;
  private readonly trackOfField: Map<string, number>;
  private readonly maxSamples: number;
  private readonly maxDivergences: number;
  private samples = 0;
  /** A frame arrived past the waveform's cap. */
  private capped = false;
  private pending: DivergenceView[] = [];
  private divergences: DivergenceView[] = [];
  /** Divergences already handed out by earlier drains (for the list's cap). */
  private sentDivergences = 0;
  private log: SessionLogEntry[] = [];
  private logDropped = 0;
  private hints: HintView[] = [];
  private tally = { gaps: 0, missing: 0, divergentCycles: 0, decodeErrors: 0, lastDivergentSample: -1 };
  private rate = { at: -1, frames: 0, perSec: 0 };
  private ended: SessionEnd | null = null;

  constructor(private readonly opts: SessionOptions) {
    const { machine: m, layout } = opts;
    this.meta = sessionTrackMeta(m, layout);
    this.compared = layout.fields.map((f) => f.kind !== 'input');
    this.stateNames = m.states.map((s) => s.name);
    this.board = this.meta.map(() => new Lane());
    this.expected = this.meta.map(() => new Lane());
    this.stateField = layout.fields.findIndex((f) => f.kind === 'state');
    this.stateIndex = new Map(layout.stateCodes.map((c, i) => [c, i]));
    this.trackOfField = new Map(layout.fields.map((f, i) => [f.name, i]));
    this.maxSamples = opts.maxSamples ?? DEFAULT_MAX_SAMPLES;
    this.maxDivergences = opts.maxDivergences ?? DEFAULT_MAX_DIVERGENCES;
    const made = createComparator({
      machine: m,
      synthesis: opts.synthesis,
      layout,
      waitForDelimiter: opts.waitForDelimiter,
      onVerdict: (v) => this.verdict(v),
      onFrame: (f) => this.frame(f),
    });
    if (!made.ok) throw new Error(made.error);
    this.comparator = made.comparator;
  }

  /** Bytes from the board, in chunks of any size. */
  push(bytes: Uint8Array): void {
    if (!this.ended) this.comparator.push(bytes);
  }

  get sampleCount(): number {
    return this.samples;
  }

  /** State index for a code; codes no state has get numbers past the last state, shown as `code N`. */
  private stateValue(code: bigint): string {
    const i = this.stateIndex.get(Number(code));
    return String(i ?? this.stateNames.length + Number(code));
  }

  private text(field: number, v: bigint): string {
    return field === this.stateField ? this.stateValue(v) : valueString(v <= 255n ? Number(v) : v);
  }

  private frame(f: FrameObservation): void {
    const sample = this.samples++;
    if (this.pending.length) {
      const e = this.stateField >= 0 ? f.expected[this.stateField] : null;
      const name = e === null || e === undefined ? null : (this.stateNames[this.stateIndex.get(Number(e)) ?? -1] ?? null);
      for (const d of this.pending) d.expectedState = name;
      this.pending = [];
    }
    if (sample >= this.maxSamples) {
      this.capped = true;
      return;
    }
    for (let k = 0; k < f.board.length; k++) {
      const actual = this.text(k, f.board[k]);
      this.board[k].push(sample, actual);
      if (this.compared[k]) {
        const e = f.expected[k];
        this.expected[k].push(sample, e === null ? actual : this.text(k, e));
      }
    }
  }

  /** A line for the session log from outside the stream (capture damage, recorder trouble). */
  note(text: string): void {
    this.addLog('note', text);
  }

  private addLog(kind: SessionLogEntry['kind'], text: string): void {
    if (this.log.length >= MAX_LOG_PER_DELTA) {
      this.logDropped++;
      return;
    }
    this.log.push({ sample: this.samples, kind, text });
  }

  private verdict(v: Verdict): void {
    switch (v.kind) {
      case 'divergence':
        return this.divergence(v);
      case 'gap':
        this.tally.gaps++;
        this.tally.missing += v.missing;
        this.addLog('gap', formatVerdict(v));
        // Lost frames still take their place on the axis, so cycles line up after the gap.
        this.samples += v.missing;
        return;
      case 'decode-error':
        this.tally.decodeErrors++;
        this.addLog('decode-error', formatVerdict(v));
        return;
      case 'identity':
        this.addLog('identity', formatVerdict(v));
        return;
      case 'hint':
        this.hints.push(hintView(v));
        return;
      case 'summary':
        return;
    }
  }

  private divergence(v: DivergenceVerdict): void {
    const sample = this.samples;
    if (sample !== this.tally.lastDivergentSample) {
      this.tally.divergentCycles++;
      this.tally.lastDivergentSample = sample;
    }
    if (this.divergences.length + this.sentDivergences >= this.maxDivergences) return;
    const d: DivergenceView = {
      sample,
      cycle: v.cycle,
      sinceReset: v.sinceReset,
      signal: v.signal,
      track: this.trackOfField.get(v.signal) ?? 0,
      group: v.group,
      expected: v.expected,
      actual: v.actual,
      expectedBits: v.expectedBits,
      actualBits: v.actualBits,
      differingBits: v.differingBits,
      state: v.state,
      expectedState: v.transition?.expected ?? null,
      transition: v.transition,
      explanation: v.explanation,
      inputsChanged: v.inputsChanged,
    };
    this.pending.push(d);
    this.divergences.push(d);
  }

  counters(nowMs?: number): Counters {
    const p = this.comparator.progress();
    if (nowMs !== undefined) {
      if (this.rate.at >= 0 && nowMs - this.rate.at >= 250) {
        this.rate.perSec = ((p.cycleFrames - this.rate.frames) * 1000) / (nowMs - this.rate.at);
        this.rate.at = nowMs;
        this.rate.frames = p.cycleFrames;
      } else if (this.rate.at < 0) {
        this.rate.at = nowMs;
        this.rate.frames = p.cycleFrames;
      }
    }
    return {
      samples: this.samples,
      cycleFrames: p.cycleFrames,
      bytes: p.bytes,
      framesPerSec: Math.max(0, Math.round(this.rate.perSec)),
      crcErrors: p.crcErrors,
      drops: p.droppedFrames,
      gaps: this.tally.gaps,
      divergences: p.divergences,
      divergentCycles: this.tally.divergentCycles,
      framingErrors: p.framingErrors,
      decodeErrors: this.tally.decodeErrors,
    };
  }

  /** Everything new since the previous drain. */
  drain(nowMs?: number): SessionDelta {
    if (this.logDropped) {
      this.log.push({ sample: this.samples, kind: 'note', text: `${this.logDropped} more link events in this interval are counted but not listed` });
      this.logDropped = 0;
    }
    const delta: SessionDelta = {
      tracks: this.board.map((l) => l.drain()),
      expected: this.expected.map((l, k) => (this.compared[k] ? l.drain() : { at: [], values: [] })),
      divergences: this.divergences,
      log: this.log,
      counters: this.counters(nowMs),
      capped: this.capped,
    };
    this.sentDivergences += this.divergences.length;
    this.divergences = [];
    this.log = [];
    return delta;
  }

  /** End of the stream: hints and the summary line (once). */
  finish(): SessionEnd {
    if (this.ended) return this.ended;
    const summary = this.comparator.finish();
    this.ended = { summary: formatVerdict(summary), hints: this.hints, counters: this.counters() };
    return this.ended;
  }
}

function hintView(v: HintVerdict): HintView {
  return { cause: v.cause, text: v.text, evidence: v.evidence };
}

/** Builds a recorder, or the reason the design and its probe layout cannot be compared. */
export function createSession(opts: SessionOptions): { ok: true; session: SessionRecorder } | { ok: false; error: string } {
  try {
    return { ok: true, session: new SessionRecorder(opts) };
  } catch (e) {
    return { ok: false, error: e instanceof Error ? e.message : String(e) };
  }
}
