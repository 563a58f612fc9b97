// A bench or replay session as the renderer holds it: tracks and expected tracks grown from pushed deltas,
// the divergence list and its markers, counters, log and hints. Plain data plus pure update functions.
import type { Counters, DivergenceView, HintView, JobEvent, SessionLogEntry, Track, TrackAppend, TrackMeta } from '../../core/services/api';
import { appendChunk } from '../sim/waveform';

export interface SessionData {
  job: number;
  source: 'emulator' | 'serial' | 'replay';
  title: string;
  stateNames: string[];
  tracks: Track[];
  /** Expected values per track (null for inputs, which the model takes as given). */
  expected: (Track | null)[];
  divergences: DivergenceView[];
  /** Sorted samples with at least one divergence. */
  markers: number[];
  /** Tracks that diverged at least once: these get the model's row under them. */
  diverged: Set<number>;
  log: SessionLogEntry[];
  counters: Counters;
  capped: boolean;
  hints: HintView[];
  summary: string | null;
  status: 'starting' | 'live' | 'ended' | 'failed';
  /** Why it ended, or what failed. */
  reason: string | null;
  capture: string | null;
  notes: string[];
  progress: { done: number; total: number } | null;
}

/** Log lines kept in the renderer (the newest). */
export const MAX_LOG = 500;

export const ZERO_COUNTERS: Counters = { samples: 0, cycleFrames: 0, bytes: 0, framesPerSec: 0, crcErrors: 0, drops: 0, gaps: 0, divergences: 0, divergentCycles: 0, framingErrors: 0, decodeErrors: 0 };

export function emptySession(job: number, source: SessionData['source'], title: string): SessionData {
  return {
    job,
    source,
    title,
    stateNames: [],
    tracks: [],
    expected: [],
    divergences: [],
    markers: [],
    diverged: new Set(),
    log: [],
    counters: ZERO_COUNTERS,
    capped: false,
    hints: [],
    summary: null,
    status: 'starting',
    reason: null,
    capture: null,
    notes: [],
    progress: null,
  };
}

function newTrack(m: TrackMeta): Track {
  return { ...m, at: [], values: [] };
}

function appendExpected(expected: (Track | null)[], chunk: TrackAppend[]): void {
  chunk.forEach((c, k) => {
    const t = expected[k];
    if (t && c.at.length) appendChunk([t], [c]);
  });
}

/** Folds one job event into the session (arrays grow in place; a new top-level object tells React to redraw). */
export function applySessionEvent(d: SessionData, e: JobEvent): SessionData {
  switch (e.type) {
    case 'session-start':
      return {
        ...d,
        source: e.source,
        title: e.title,
        stateNames: e.stateNames,
        tracks: e.tracks.map(newTrack),
        expected: e.tracks.map((t, k) => (e.compared[k] ? newTrack(t) : null)),
        capture: e.capture,
        notes: e.notes,
        status: 'live',
      };
    case 'session-delta': {
      appendChunk(d.tracks, e.tracks);
      appendExpected(d.expected, e.expected);
      for (const v of e.divergences) {
        d.divergences.push(v);
        d.diverged.add(v.track);
        if (!d.markers.length || d.markers[d.markers.length - 1] < v.sample) d.markers.push(v.sample);
      }
      const log = e.log.length ? [...d.log, ...e.log].slice(-MAX_LOG) : d.log;
      return { ...d, log, counters: e.counters, capped: e.capped };
    }
    case 'session-end':
      return { ...d, hints: e.hints, summary: e.summary, counters: e.counters, status: 'ended', reason: e.reason, progress: null };
    case 'progress':
      return { ...d, progress: { done: e.done, total: e.total ?? e.done } };
    case 'failed':
      return { ...d, status: 'failed', reason: e.error, progress: null };
    case 'cancelled':
    case 'done':
      return d.status === 'ended' || d.status === 'failed' ? d : { ...d, status: 'ended', reason: e.type === 'cancelled' ? 'cancelled' : e.message, progress: null };
    default:
      return d;
  }
}

/** The session's waveform as the canvas takes it: samples on the axis. */
export function sessionWave(d: SessionData) {
  return { cycles: Math.min(d.counters.samples, lastSample(d)), stateNames: d.stateNames, tracks: d.tracks, diagnostics: [], stimulusSource: null };
}

/** One past the last sample the tracks hold (the waveform may stop at its cap while counters go on). */
function lastSample(d: SessionData): number {
  let last = 0;
  for (const t of d.tracks) if (t.at.length) last = Math.max(last, t.at[t.at.length - 1] + 1);
  return d.capped ? last : Math.max(last, d.counters.samples);
}

/** Index of the next (+1) or previous (-1) divergence from `current`, wrapping around; -1 when there is none. */
export function stepDivergence(count: number, current: number, dir: 1 | -1): number {
  if (count === 0) return -1;
  if (current < 0) return dir === 1 ? 0 : count - 1;
  return (current + dir + count) % count;
}
