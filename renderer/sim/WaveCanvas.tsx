// The waveform on a <canvas>: one row per track (inputs, state by name, registers, status, outputs), a
// cycle axis, zoom (Ctrl+wheel, buttons, +/-) and pan (wheel, drag, arrows). Only visible cycles are drawn.
// Sessions add the model's expected value under each diverging signal, divergence markers and a focus cycle.
import { useCallback, useEffect, useRef, useState, type KeyboardEvent, type MouseEvent } from 'react';
import type { SimulationView, Track } from '../../core/services/api';
import { formatValue } from '../../core/util/bits';
import { PALETTE, STATE_FILLS } from '../app/palette';
import { centreCycle, centreOn, changeIndexAt, diffSpans, fitView, markersInView, panBy, segmentsInView, tickStep, visibleRange, zoomAt, type WaveView } from './waveform';

export type Radix = 'dec' | 'hex' | 'bin';

const NAME_W = 150;
const AXIS_H = 26;
const ROW_H = 28;
const FONT = '12px ui-monospace, "DejaVu Sans Mono", monospace';

const GROUP_COLOUR: Record<Track['group'], string> = { input: PALETTE.ok, state: PALETTE.state, register: PALETTE.teal, status: PALETTE.warn, output: PALETTE.accent };

export function valueText(track: Pick<Track, 'group' | 'width' | 'signed'>, raw: string, radix: Radix, stateNames: string[]): string {
  // Codes no state has are sent past the last state index (see core/services/session.ts).
  if (track.group === 'state') return stateNames[Number(raw)] ?? `code ${Number(raw) - stateNames.length}`;
  const bits = BigInt(raw);
  return formatValue(bits, track.width, track.signed, track.width === 1 ? 'dec' : radix);
}

function drawTrack(ctx: CanvasRenderingContext2D, t: Track, y: number, view: WaveView, from: number, to: number, total: number, radix: Radix, stateNames: string[], plotW: number, model = false) {
  const x = (c: number) => NAME_W + (c - view.start) / view.cyclesPerPx;
  const top = y + 5;
  const bottom = y + ROW_H - 5;
  const mid = (top + bottom) / 2;
  const segs = segmentsInView(t.at, total, from, to, view.cyclesPerPx);
  ctx.lineWidth = 1.4;
  for (const s of segs) {
    const x0 = Math.max(NAME_W, x(s.from));
    const x1 = Math.min(NAME_W + plotW, x(s.to));
    if ('busy' in s) {
      ctx.fillStyle = PALETTE.busy;
      ctx.fillRect(x0, top, Math.max(1, x1 - x0), bottom - top);
      continue;
    }
    const raw = t.values[s.index];
    if (t.width === 1 && t.group !== 'state') {
      const high = raw !== '0';
      ctx.strokeStyle = model ? PALETTE.model : GROUP_COLOUR[t.group];
      ctx.beginPath();
      ctx.moveTo(x0, high ? top : bottom);
      ctx.lineTo(x1, high ? top : bottom);
      // The edge into the next run, when that run starts inside the plot.
      if (s.to < to && s.index + 1 < t.values.length) {
        const nextHigh = t.values[s.index + 1] !== '0';
        if (nextHigh !== high) ctx.lineTo(x1, nextHigh ? top : bottom);
      }
      ctx.stroke();
      if (high) {
        ctx.fillStyle = 'rgba(233,162,59,0.08)';
        if (t.group === 'output') ctx.fillRect(x0, top, x1 - x0, bottom - top);
      }
      continue;
    }
    // A bus: a lozenge per run, with the value written inside when it fits.
    const slant = Math.min(4, (x1 - x0) / 2);
    const lozenge = () => {
      ctx.beginPath();
      ctx.moveTo(x0, mid);
      ctx.lineTo(x0 + slant, top);
      ctx.lineTo(x1 - slant, top);
      ctx.lineTo(x1, mid);
      ctx.lineTo(x1 - slant, bottom);
      ctx.lineTo(x0 + slant, bottom);
      ctx.closePath();
    };
    if (t.group === 'state' && !model) {
      ctx.fillStyle = STATE_FILLS[Number(raw) % STATE_FILLS.length];
      lozenge();
      ctx.fill();
    }
    ctx.strokeStyle = model ? PALETTE.model : t.group === 'state' ? PALETTE.state : PALETTE.bus;
    lozenge();
    ctx.stroke();
    const label = valueText(t, raw, radix, stateNames);
    const room = x1 - x0 - 2 * slant - 4;
    const w = ctx.measureText(label).width;
    if (room >= w) {
      ctx.fillStyle = model ? PALETTE.model : PALETTE.text;
      ctx.fillText(label, x0 + slant + 2, mid + 4);
    } else if (room > 14) {
      ctx.fillStyle = PALETTE.muted;
      ctx.fillText('…', x0 + slant + 2, mid + 4);
    }
  }
}

/** A drawn row: a track, or the model's expected values for the track above it. */
interface Row {
  track: Track;
  model: boolean;
  /** For a model row, the board's track it is compared with. */
  actual: Track | null;
}

interface Props {
  sim: SimulationView;
  radix: Radix;
  /** Expected values per track index, drawn under the tracks listed in `expectedShown`. */
  expected?: (Track | null)[];
  expectedShown?: ReadonlySet<number>;
  /** Sorted cycles with a divergence, marked on the axis. */
  markers?: readonly number[];
  /** The selected cycle; `seq` changes to centre on it again. */
  focus?: { cycle: number; seq: number } | null;
  /** The view resets (fit or start) when this changes; by default when `sim` changes. */
  resetKey?: unknown;
  /** Keep the newest cycles in view while the trace grows. */
  follow?: boolean;
  /** What the axis counts (cycles, or samples of a session). */
  unit?: string;
}

export function WaveCanvas({ sim, radix, expected, expectedShown, markers, focus, resetKey, follow, unit = 'cycle' }: Props) {
  const canvas = useRef<HTMLCanvasElement>(null);
  const box = useRef<HTMLDivElement>(null);
  const [size, setSize] = useState({ w: 800, h: 300 });
  const [view, setView] = useState<WaveView>({ start: 0, cyclesPerPx: 1 });
  const [cursor, setCursor] = useState<number | null>(null);
  const drag = useRef<{ x: number; view: WaveView } | null>(null);
  const plotW = Math.max(50, size.w - NAME_W);
  const total = sim.cycles;
  const rows: Row[] = [];
  sim.tracks.forEach((t, k) => {
    rows.push({ track: t, model: false, actual: null });
    const e = expected?.[k];
    if (e && expectedShown?.has(k)) rows.push({ track: e, model: true, actual: t });
  });
  const height = AXIS_H + rows.length * ROW_H + 6;

  useEffect(() => {
    const el = box.current;
    if (!el) return;
    const ro = new ResizeObserver(() => setSize({ w: el.clientWidth, h: height }));
    ro.observe(el);
    return () => ro.disconnect();
  }, [height]);

  // A short run shows whole; a long one opens at its start with 8 px per cycle, values readable.
  const plotWRef = useRef(plotW);
  plotWRef.current = plotW;
  const totalRef = useRef(total);
  totalRef.current = total;
  const key = resetKey === undefined ? sim : resetKey;
  useEffect(() => {
    const w = plotWRef.current;
    const n = totalRef.current;
    setView(n <= w / 8 ? fitView(w, n) : { start: 0, cyclesPerPx: 1 / 8 });
  }, [key]);

  // Following a growing trace: the right edge stays on the newest cycle.
  useEffect(() => {
    if (!follow) return;
    setView((v) => ({ ...v, start: Math.max(0, total - plotW * v.cyclesPerPx) }));
  }, [follow, total, plotW]);

  useEffect(() => {
    if (focus) setView((v) => centreOn(v, focus.cycle, plotWRef.current, Math.max(totalRef.current, focus.cycle + 1)));
  }, [focus]);

  useEffect(() => {
    const c = canvas.current;
    if (!c) return;
    const dpr = window.devicePixelRatio || 1;
    c.width = Math.round(size.w * dpr);
    c.height = Math.round(height * dpr);
    c.style.width = `${size.w}px`;
    c.style.height = `${height}px`;
    const ctx = c.getContext('2d');
    if (!ctx) return;
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.font = FONT;
    ctx.fillStyle = PALETTE.panel;
    ctx.fillRect(0, 0, size.w, height);
    const { from, to } = visibleRange(view, plotW, total);
    const x = (cyc: number) => NAME_W + (cyc - view.start) / view.cyclesPerPx;
    const cycleW = Math.max(1, 1 / view.cyclesPerPx);

    // Axis and grid.
    const step = tickStep(view.cyclesPerPx);
    ctx.strokeStyle = PALETTE.grid;
    ctx.fillStyle = PALETTE.muted;
    ctx.lineWidth = 1;
    for (let c0 = Math.ceil(from / step) * step; c0 <= to; c0 += step) {
      const px = Math.round(x(c0)) + 0.5;
      ctx.beginPath();
      ctx.moveTo(px, AXIS_H - 6);
      ctx.lineTo(px, height);
      ctx.stroke();
      ctx.fillText(String(c0), px + 3, 15);
    }
    ctx.strokeStyle = PALETTE.line;
    ctx.beginPath();
    ctx.moveTo(0, AXIS_H - 0.5);
    ctx.lineTo(size.w, AXIS_H - 0.5);
    ctx.stroke();

    // Rows.
    ctx.save();
    ctx.beginPath();
    ctx.rect(NAME_W, 0, plotW, height);
    ctx.clip();
    if (focus && focus.cycle >= from && focus.cycle < to) {
      ctx.fillStyle = 'rgba(233,162,59,0.16)';
      ctx.fillRect(x(focus.cycle), AXIS_H, cycleW, height - AXIS_H);
    }
    rows.forEach((r, i) => {
      const y = AXIS_H + i * ROW_H;
      if (r.model && r.actual) {
        // Where board and model disagree, both rows get a red wash.
        ctx.fillStyle = 'rgba(255,107,107,0.22)';
        for (const d of diffSpans(r.actual, r.track, from, to)) ctx.fillRect(x(d.from), y - ROW_H + 2, Math.max(1, (d.to - d.from) / view.cyclesPerPx), 2 * ROW_H - 4);
      }
      drawTrack(ctx, r.track, y, view, from, to, total, radix, sim.stateNames, plotW, r.model);
    });
    if (markers?.length) {
      ctx.fillStyle = PALETTE.error;
      for (const m of markersInView(markers, from, to, view.cyclesPerPx)) {
        const px = x(m) + cycleW / 2;
        ctx.beginPath();
        ctx.moveTo(px - 4, AXIS_H - 7);
        ctx.lineTo(px + 4, AXIS_H - 7);
        ctx.lineTo(px, AXIS_H - 1);
        ctx.closePath();
        ctx.fill();
      }
    }
    if (cursor !== null && cursor >= from && cursor < to) {
      ctx.fillStyle = 'rgba(143,180,255,0.12)';
      ctx.fillRect(x(cursor), AXIS_H, cycleW, height - AXIS_H);
    }
    ctx.restore();

    // Names, grouped by colour.
    ctx.fillStyle = PALETTE.panel2;
    ctx.fillRect(0, AXIS_H, NAME_W - 4, height - AXIS_H);
    rows.forEach((r, i) => {
      const t = r.track;
      const y = AXIS_H + i * ROW_H;
      ctx.fillStyle = r.model ? PALETTE.model : GROUP_COLOUR[t.group];
      ctx.fillRect(0, y + 6, 3, ROW_H - 12);
      ctx.fillStyle = r.model ? PALETTE.model : PALETTE.text;
      ctx.fillText(r.model ? '  model' : t.name, 10, y + ROW_H / 2 + 4);
      ctx.fillStyle = PALETTE.muted;
      const tag = r.model ? 'expected' : t.group === 'state' ? 'state' : t.width === 1 ? '' : `${t.signed ? 's' : 'u'}${t.width}`;
      if (tag) ctx.fillText(tag, NAME_W - 12 - ctx.measureText(tag).width, y + ROW_H / 2 + 4);
      ctx.strokeStyle = PALETTE.grid;
      ctx.beginPath();
      ctx.moveTo(0, y + ROW_H + 0.5);
      ctx.lineTo(size.w, y + ROW_H + 0.5);
      ctx.stroke();
    });
    ctx.fillStyle = PALETTE.muted;
    ctx.fillText(unit, 10, 15);
  }, [sim, view, size, radix, cursor, plotW, total, height, expected, expectedShown, markers, focus, unit]);

  const cycleAt = useCallback((clientX: number) => {
    const r = canvas.current!.getBoundingClientRect();
    const px = clientX - r.left - NAME_W;
    return px < 0 ? null : Math.floor(view.start + px * view.cyclesPerPx);
  }, [view]);

  // Wheel events are handled natively so that preventDefault works (React's wheel listener is passive).
  useEffect(() => {
    const c = canvas.current;
    if (!c) return;
    const onWheel = (e: globalThis.WheelEvent) => {
      e.preventDefault();
      const r = c.getBoundingClientRect();
      if (e.ctrlKey || e.metaKey) setView((v) => zoomAt(v, e.deltaY < 0 ? 1.25 : 0.8, Math.max(0, e.clientX - r.left - NAME_W), plotW, total));
      else setView((v) => panBy(v, e.deltaX !== 0 ? e.deltaX : e.deltaY, plotW, total));
    };
    c.addEventListener('wheel', onWheel, { passive: false });
    return () => c.removeEventListener('wheel', onWheel);
  }, [plotW, total]);
  const onMouseDown = (e: MouseEvent) => (drag.current = { x: e.clientX, view });
  const onMouseMove = (e: MouseEvent) => {
    if (drag.current) setView(panBy(drag.current.view, drag.current.x - e.clientX, plotW, total));
    const c = cycleAt(e.clientX);
    setCursor(c !== null && c < total ? c : null);
  };
  const onKey = (e: KeyboardEvent) => {
    if (e.key === '+' || e.key === '=') setView((v) => zoomAt(v, 1.5, plotW / 2, plotW, total));
    else if (e.key === '-') setView((v) => zoomAt(v, 1 / 1.5, plotW / 2, plotW, total));
    else if (e.key === 'ArrowRight') setView((v) => panBy(v, plotW / 4, plotW, total));
    else if (e.key === 'ArrowLeft') setView((v) => panBy(v, -plotW / 4, plotW, total));
    else if (e.key === '0') setView(fitView(plotW, total));
    else return;
    e.preventDefault();
  };

  const { from, to } = visibleRange(view, plotW, total);
  const readout = (cycle: number) =>
    `${unit} ${cycle}: ` +
    rows
      .map((r) => `${r.model ? `${r.actual!.name}(model)` : r.track.name}=${r.track.at.length ? valueText(r.track, r.track.values[changeIndexAt(r.track.at, cycle)], radix, sim.stateNames) : '?'}`)
      .join('  ');
  return (
    <div className="wave" data-view-start={Math.floor(view.start)} data-view-end={Math.max(from, to - 1)} data-centre={centreCycle(view, plotW)} data-focus={focus?.cycle ?? ''} data-model-rows={rows.filter((r) => r.model).map((r) => r.actual!.name).join(' ')} data-testid="wave">
      <div className="wave-tools">
        <button onClick={() => setView((v) => zoomAt(v, 1.5, plotW / 2, plotW, total))} title="Zoom in (+)" data-testid="zoom-in">
          +
        </button>
        <button onClick={() => setView((v) => zoomAt(v, 1 / 1.5, plotW / 2, plotW, total))} title="Zoom out (-)">
          −
        </button>
        <button onClick={() => setView(fitView(plotW, total))} title="Whole run (0)">
          fit
        </button>
        <span className="muted" data-testid="wave-range">
          {unit}s {from}–{Math.max(from, to - 1)} of {total}
        </span>
        <span className="wave-readout" data-testid="wave-readout">
          {cursor !== null ? readout(cursor) : focus && focus.cycle < total ? readout(focus.cycle) : 'Ctrl+wheel zooms, wheel or drag pans, hover reads values'}
        </span>
      </div>
      <div className="wave-box" ref={box}>
        <canvas
          ref={canvas}
          tabIndex={0}
          aria-label={`Waveform of ${total} ${unit}s`}
          data-testid="waveform"
          onMouseDown={onMouseDown}
          onMouseMove={onMouseMove}
          onMouseUp={() => (drag.current = null)}
          onMouseLeave={() => {
            drag.current = null;
            setCursor(null);
          }}
          onKeyDown={onKey}
        />
      </div>
    </div>
  );
}
