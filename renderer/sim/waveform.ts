// The waveform's arithmetic, kept free of the canvas: which cycles are visible, which runs of a
// change list fall on screen, and zoom and pan. Work is bounded by the pixel width, not the trace length.

export interface WaveView {
  /** Cycle at the left edge of the plot (may be fractional while panning). */
  start: number;
  /** Cycles per pixel: above 1 several cycles share a pixel; below 1 a cycle spans several pixels. */
  cyclesPerPx: number;
}

/** Widest zoom: a cycle at most 80 px wide. */
export const MIN_CYCLES_PER_PX = 1 / 80;

export type WaveSegment = { from: number; to: number; index: number } | { from: number; to: number; busy: true };

/** Integer cycles [from, to) that touch the plot. */
export function visibleRange(view: WaveView, plotWidth: number, total: number): { from: number; to: number } {
  const from = Math.max(0, Math.floor(view.start));
  const to = Math.min(total, Math.ceil(view.start + plotWidth * view.cyclesPerPx));
  return { from, to: Math.max(from, to) };
}

/** Index of the last change at or before `cycle` (0 when the cycle precedes every change). */
export function changeIndexAt(at: readonly number[], cycle: number): number {
  let lo = 0;
  let hi = at.length - 1;
  if (hi < 0 || at[0] > cycle) return 0;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (at[mid] <= cycle) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/**
 * The runs of one track inside [from, to). A run narrower than a pixel is merged with its
 * neighbours into one `busy` segment, so each step covers a pixel or a whole change:
 * the result never has more than about two segments per pixel, however long the trace.
 */
export function segmentsInView(at: readonly number[], total: number, from: number, to: number, cyclesPerPx: number): WaveSegment[] {
  const out: WaveSegment[] = [];
  if (at.length === 0 || from >= to) return out;
  const pixel = Math.max(1, cyclesPerPx);
  let k = changeIndexAt(at, from);
  let pos = from;
  while (pos < to) {
    const runEnd = Math.min(to, k + 1 < at.length ? at[k + 1] : total);
    if (runEnd - pos >= pixel || runEnd >= to) {
      out.push({ from: pos, to: runEnd, index: k });
      pos = runEnd;
      k++;
      continue;
    }
    const bucketEnd = Math.min(to, pos + pixel);
    const last = out[out.length - 1];
    if (last && 'busy' in last && last.to === pos) last.to = bucketEnd;
    else out.push({ from: pos, to: bucketEnd, busy: true });
    pos = bucketEnd;
    // The run in force at the bucket's end (it may start exactly there) is the next step's run.
    k = Math.max(k, changeIndexAt(at, bucketEnd));
  }
  return out;
}

function clampView(view: WaveView, plotWidth: number, total: number): WaveView {
  const maxCpp = Math.max(MIN_CYCLES_PER_PX, total / Math.max(1, plotWidth));
  const cyclesPerPx = Math.min(maxCpp, Math.max(MIN_CYCLES_PER_PX, view.cyclesPerPx));
  const span = plotWidth * cyclesPerPx;
  const start = Math.min(Math.max(0, total - span), Math.max(0, view.start));
  return { start, cyclesPerPx };
}

/** The whole trace in the plot. */
export function fitView(plotWidth: number, total: number): WaveView {
  return clampView({ start: 0, cyclesPerPx: total / Math.max(1, plotWidth) }, plotWidth, total);
}

/** Zooms by `factor` (>1 zooms in) keeping the cycle under pixel `x` in place. */
export function zoomAt(view: WaveView, factor: number, x: number, plotWidth: number, total: number): WaveView {
  const anchor = view.start + x * view.cyclesPerPx;
  const cyclesPerPx = view.cyclesPerPx / factor;
  return clampView({ start: anchor - x * cyclesPerPx, cyclesPerPx }, plotWidth, total);
}

export function panBy(view: WaveView, dxPx: number, plotWidth: number, total: number): WaveView {
  return clampView({ start: view.start + dxPx * view.cyclesPerPx, cyclesPerPx: view.cyclesPerPx }, plotWidth, total);
}

/** Tick spacing in cycles: 1, 2, 5 × 10^n, at least `minPx` pixels apart. */
export function tickStep(cyclesPerPx: number, minPx = 70): number {
  const raw = cyclesPerPx * minPx;
  const exp = Math.pow(10, Math.floor(Math.log10(Math.max(raw, 1))));
  for (const m of [1, 2, 5, 10]) if (m * exp >= raw) return Math.max(1, m * exp);
  return Math.max(1, 10 * exp);
}

/**
 * A view with `cycle` in the middle. Zoomed out further than `readable` cycles per pixel, it zooms in to
 * that, so the values around the cycle can be read; otherwise the zoom is kept.
 */
export function centreOn(view: WaveView, cycle: number, plotWidth: number, total: number, readable = 1 / 8): WaveView {
  const cyclesPerPx = Math.min(view.cyclesPerPx, readable);
  return clampView({ start: cycle + 0.5 - (plotWidth * cyclesPerPx) / 2, cyclesPerPx }, plotWidth, total);
}

/** The cycle at the middle of the plot. */
export function centreCycle(view: WaveView, plotWidth: number): number {
  return Math.floor(view.start + (plotWidth * view.cyclesPerPx) / 2);
}

/**
 * Spans of [from, to) where two change lists hold different values, found by walking both lists together.
 * Stops after `maxSteps` changes (a zoomed-out view of a busy trace), returning what it found so far.
 */
export function diffSpans(a: { at: readonly number[]; values: readonly string[] }, b: { at: readonly number[]; values: readonly string[] }, from: number, to: number, maxSteps = 20_000): { from: number; to: number }[] {
  const out: { from: number; to: number }[] = [];
  if (!a.at.length || !b.at.length || from >= to) return out;
  let i = changeIndexAt(a.at, from);
  let j = changeIndexAt(b.at, from);
  let pos = from;
  for (let steps = 0; pos < to && steps < maxSteps; steps++) {
    const nextA = i + 1 < a.at.length ? a.at[i + 1] : Infinity;
    const nextB = j + 1 < b.at.length ? b.at[j + 1] : Infinity;
    const end = Math.min(to, nextA, nextB);
    if (a.values[i] !== b.values[j]) {
      const last = out[out.length - 1];
      if (last && last.to === pos) last.to = end;
      else out.push({ from: pos, to: end });
    }
    if (end === nextA) i++;
    if (end === nextB) j++;
    pos = end;
  }
  return out;
}

/** Index of the first element of a sorted list that is >= value. */
export function lowerBound(sorted: readonly number[], value: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (sorted[mid] < value) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Markers (sorted cycles) inside [from, to), at most one per pixel column. */
export function markersInView(sorted: readonly number[], from: number, to: number, cyclesPerPx: number): number[] {
  const out: number[] = [];
  const px = Math.max(1, cyclesPerPx);
  for (let k = lowerBound(sorted, from); k < sorted.length && sorted[k] < to; ) {
    const c = sorted[k];
    out.push(c);
    k = lowerBound(sorted, c + px);
  }
  return out;
}

/** Appends pushed change-list entries to tracks, in place; an entry that repeats the last value is no change. */
export function appendChunk(tracks: { at: number[]; values: string[] }[], chunk: readonly { at: readonly number[]; values: readonly string[] }[]): void {
  chunk.forEach((c, k) => {
    const t = tracks[k];
    if (!t) return;
    for (let i = 0; i < c.at.length; i++) {
      if (t.values.length && t.values[t.values.length - 1] === c.values[i]) continue;
      t.at.push(c.at[i]);
      t.values.push(c.values[i]);
    }
  });
}
