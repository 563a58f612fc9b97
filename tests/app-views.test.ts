// The screens' pure parts: waveform windowing (bounded by pixels, not trace length), zoom and pan,
// syntax colouring and diagnostic marks, diagram input, reply validation, and components rendered to HTML.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, it } from 'vitest';
import { checkDesign } from '../core/check/checker';
import type { MachineSummary, Track } from '../core/services/api';
import { summarize, exprText } from '../main/services/describe';
import { SAFETY_NOTES } from '../main/services/safety';
import { reportSections } from '../main/services/synth-adapter';
import { traceToTracks } from '../main/services/tracks';
import { validateReply } from '../renderer/api/client';
import { highlightLine, markSegments } from '../renderer/design/highlight';
import { edgeLabelLines, elkGraph, layoutMachine, stateOrder } from '../renderer/machine/layout';
import { StateDiagram } from '../renderer/machine/StateDiagram';
import { SafetyNotesView } from '../renderer/safety/SafetyPanel';
import { csvTemplate } from '../renderer/sim/SimulateScreen';
import { valueText } from '../renderer/sim/WaveCanvas';
import { changeIndexAt, fitView, panBy, segmentsInView, tickStep, visibleRange, zoomAt, MIN_CYCLES_PER_PX } from '../renderer/sim/waveform';

const demo = readFileSync(path.join(__dirname, '..', 'fixtures', 'tank_dosing.tsm'), 'utf8');
const machine = checkDesign(demo).machine!;
const summary: MachineSummary = summarize(machine);

describe('waveform windowing', () => {
  it('finds the run in force at a cycle', () => {
    const at = [0, 5, 9, 20];
    expect([0, 4, 5, 8, 9, 19, 20, 1000].map((c) => changeIndexAt(at, c))).toEqual([0, 0, 1, 1, 2, 2, 3, 3]);
    expect(changeIndexAt([], 3)).toBe(0);
  });

  it('cuts runs at the view edges when zoomed in', () => {
    const segs = segmentsInView([0, 5, 9, 20], 30, 3, 12, 0.1);
    expect(segs).toEqual([
      { from: 3, to: 5, index: 0 },
      { from: 5, to: 9, index: 1 },
      { from: 9, to: 12, index: 2 },
    ]);
  });

  it('covers the visible range exactly, in order, without gaps', () => {
    const at = Array.from({ length: 400 }, (_, i) => i * 3 + (i % 2));
    for (const cpp of [0.05, 1, 2.5, 7, 40]) {
      const segs = segmentsInView(at, 1300, 17, 1100, cpp);
      expect(segs[0].from).toBe(17);
      expect(segs[segs.length - 1].to).toBe(1100);
      for (let k = 1; k < segs.length; k++) expect(segs[k].from).toBe(segs[k - 1].to);
    }
  });

  it('merges sub-pixel runs into busy blocks, keeping the work proportional to the pixel width', () => {
    const n = 1_000_000;
    const at = Array.from({ length: n }, (_, i) => i); // a signal that changes every cycle
    const width = 800;
    const view = fitView(width, n);
    const { from, to } = visibleRange(view, width, n);
    const segs = segmentsInView(at, n, from, to, view.cyclesPerPx);
    expect(segs.length).toBeLessThanOrEqual(2 * width);
    expect(segs.every((s) => 'busy' in s)).toBe(true);
    // Zoomed to 10 px per cycle in the middle of the trace: exactly the visible cycles come back.
    const close = { start: 500_000, cyclesPerPx: 0.1 };
    const r = visibleRange(close, width, n);
    const near = segmentsInView(at, n, r.from, r.to, close.cyclesPerPx);
    expect(near).toHaveLength(80);
    expect(near[0]).toEqual({ from: 500_000, to: 500_001, index: 500_000 });
  });

  it('keeps a quiet run as one segment however far it is zoomed out', () => {
    const segs = segmentsInView([0, 999_999], 1_000_000, 0, 1_000_000, 1250);
    expect(segs[0]).toEqual({ from: 0, to: 999_999, index: 0 });
  });

  it('zooms about the pointer and clamps to the trace', () => {
    const v = { start: 100, cyclesPerPx: 1 };
    const z = zoomAt(v, 2, 200, 800, 10_000);
    expect(z.cyclesPerPx).toBe(0.5);
    expect(z.start + 200 * z.cyclesPerPx).toBe(300); // the cycle under the pointer stays put
    expect(zoomAt(v, 1e9, 0, 800, 10_000).cyclesPerPx).toBe(MIN_CYCLES_PER_PX);
    expect(zoomAt(v, 1e-9, 0, 800, 10_000)).toEqual({ start: 0, cyclesPerPx: 12.5 });
    expect(panBy({ start: 0, cyclesPerPx: 1 }, -500, 800, 10_000).start).toBe(0);
    expect(panBy({ start: 0, cyclesPerPx: 1 }, 1e9, 800, 10_000).start).toBe(9200);
  });

  it('spaces axis ticks by 1, 2, 5 x 10^n', () => {
    expect(tickStep(0.1)).toBe(10);
    expect(tickStep(1)).toBe(100);
    expect(tickStep(3)).toBe(500);
    expect(tickStep(0.001)).toBe(1);
  });

  it('formats values by radix, and the state by name', () => {
    const t: Track = { name: 'x', group: 'register', width: 8, signed: true, at: [0], values: ['250'] };
    expect(valueText(t, '250', 'dec', [])).toBe('-6');
    expect(valueText(t, '250', 'hex', [])).toBe('0xfa');
    expect(valueText(t, '250', 'bin', [])).toBe('0b11111010');
    expect(valueText({ ...t, group: 'state' }, '2', 'hex', ['A', 'B', 'C'])).toBe('C');
  });
});

describe('trace to tracks', () => {
  it('records only changes, with the state as its index', () => {
    const rows = [0, 1, 2, 3].map((cycle) => ({ cycle, inputs: [0n, 0n, cycle < 2 ? 5n : 7n, 0n], state: cycle < 3 ? 0 : 1, regs: [0n, 0n, 0n], outputs: [0n, 0n, 0n, 0n], fired: -1 }));
    const tracks = traceToTracks(machine, rows);
    const dose = tracks.find((t) => t.name === 'dose')!;
    expect(dose).toMatchObject({ at: [0, 2], values: ['5', '7'], width: 8 });
    const state = tracks.find((t) => t.group === 'state')!;
    expect(state).toMatchObject({ at: [0, 3], values: ['0', '1'], width: 2 });
  });
});

describe('syntax colouring', () => {
  it('classes keywords, types, numbers, state names and comments, covering every character', () => {
    const line = 'in   dose    : u8   -- requested dose';
    const segs = highlightLine(line);
    expect(segs.map((s) => s.text).join('')).toBe(line);
    expect(segs.find((s) => s.text === 'in')!.cls).toBe('kw');
    expect(segs.find((s) => s.text === 'u8')!.cls).toBe('type');
    expect(segs[segs.length - 1]).toEqual({ text: '-- requested dose', cls: 'comment' });
    const go = highlightLine('  on pulse go Pump with poured <- poured + 1');
    expect(go.find((s) => s.text === 'Pump')!.cls).toBe('state');
    expect(go.find((s) => s.text === '<-')!.cls).toBe('op');
    expect(go.find((s) => s.text === '1')!.cls).toBe('num');
    expect(highlightLine('state Idle initial').map((s) => s.cls)).toEqual(['kw', 'plain', 'state', 'plain', 'modifier']);
  });

  it('underlines the token a diagnostic points at; errors win over warnings', () => {
    const segs = markSegments(highlightLine('  go Pmup'), [
      { col: 6, severity: 'warning' },
      { col: 7, severity: 'error' },
    ]);
    expect(segs.find((s) => s.text === 'Pmup')!.mark).toBe('error');
    expect(segs.filter((s) => s.mark)).toHaveLength(1);
  });

  it('moves a mark on blank space to the next token, and shows one past the end of the line', () => {
    expect(markSegments(highlightLine('a   b'), [{ col: 2, severity: 'error' }]).find((s) => s.mark)!.text).toBe('b');
    const end = markSegments(highlightLine('go'), [{ col: 3, severity: 'error' }]);
    expect(end[end.length - 1]).toEqual({ text: ' ', cls: 'plain', mark: 'error' });
  });
});

describe('machine summary and diagram input', () => {
  it('prints expressions back with the parentheses they need', () => {
    const m = checkDesign('machine p\nin a : u4\nin b : u4\nout y : bit = 0\nstate S\n  on (a + b) == 3 or not (a < b) go S\n').machine!;
    expect(exprText(m.states[0].transitions[0].condition!)).toBe('a + b == 3 or not a < b');
    const printed = (expr: string) => {
      const m2 = checkDesign(`machine q\nin a : u4\nin b : u4\nout y : u4 = 0\nstate S\n  y = ${expr}\n`).machine!;
      return exprText(m2.states[0].outputs[0].value);
    };
    expect(printed('(a - 1) & 3')).toBe('a - 1 & 3'); // '&' binds looser than '-' in the design language
    expect(printed('(a & 3) + 1')).toBe('(a & 3) + 1');
    expect(printed('a - (b - 1)')).toBe('a - (b - 1)');
    expect(printed('(a | b) ^ 5')).toBe('(a | b) ^ 5');
    // Whatever is printed reads back as the same expression.
    for (const e of ['(a & 3) + 1', 'a - (b - 1)', '~(a + b)', '(a | b) ^ 5']) {
      expect(printed(printed(e))).toBe(printed(e));
    }
  });

  it('labels edges with priority only when a state has several', () => {
    const pump = summary.edges.filter((e) => e.from === 2);
    expect(edgeLabelLines(pump[2], 3)).toEqual(['3. pulse', '/ poured <- poured + 1']);
    expect(edgeLabelLines(summary.edges.find((e) => e.from === 1)!, 1)).toEqual(['always']);
  });

  it('gives ELK one node per state, reset state first, sized to its text', () => {
    const g = elkGraph(summary);
    expect(g.children!.map((c) => c.id)).toEqual(['s0', 's1', 's2', 's3']);
    expect(g.edges).toHaveLength(summary.edges.length);
    const pump = g.children!.find((c) => c.id === 's2')!;
    expect(pump.height).toBeGreaterThan(g.children!.find((c) => c.id === 's1')!.height!);
    expect(stateOrder({ ...summary, states: summary.states.map((s, i) => ({ ...s, initial: i === 2 })) })).toEqual([2, 0, 1, 3]);
  });

  it('lays the demo out with every state placed apart and every edge routed', async () => {
    const d = await layoutMachine(summary);
    expect(d.nodes).toHaveLength(4);
    expect(d.edges.every((e) => e.points.length >= 2)).toBe(true);
    for (const a of d.nodes)
      for (const b of d.nodes) {
        if (a === b) continue;
        const apart = a.x + a.w <= b.x || b.x + b.w <= a.x || a.y + a.h <= b.y || b.y + b.h <= a.y;
        expect(apart, `${a.name} overlaps ${b.name}`).toBe(true);
      }
    const svg = renderToStaticMarkup(createElement(StateDiagram, { diagram: d }));
    for (const s of ['Idle', 'Prime', 'Pump', 'Finish', '2. poured == target']) expect(svg).toContain(s);
    expect(svg.match(/<path d="M/g)!.length).toBeGreaterThanOrEqual(summary.edges.length + 1); // edges + entry arrow
  });
});

describe('replies and components', () => {
  it('accepts a well-formed reply and rejects one that does not match the result schema', () => {
    expect(validateReply('safety.notes', { ok: true, value: SAFETY_NOTES })).toEqual({ ok: true, value: SAFETY_NOTES });
    const bad = validateReply('design.check', { ok: true, value: { diagnostics: 'none' } });
    expect(bad).toMatchObject({ ok: false, error: { code: 'internal' } });
    expect(!bad.ok && bad.error.message).toContain('diagnostics');
    expect(validateReply('app.info', 'garbage')).toMatchObject({ ok: false });
    expect(validateReply('app.info', { ok: false, error: { code: 'unavailable', message: 'm' } })).toEqual({ ok: false, error: { code: 'unavailable', message: 'm' } });
  });

  it('renders every safety section and the deferral', () => {
    const html = renderToStaticMarkup(createElement(SafetyNotesView, { notes: SAFETY_NOTES }));
    for (const s of SAFETY_NOTES.sections) expect(html).toContain(s.heading);
    expect(html).toContain('ANSI/ESD S20.20');
    expect(html).toContain('safety-deferral');
  });

  it('starts a CSV with the inputs as header', () => {
    expect(csvTemplate(summary.inputs).split('\n')[0]).toBe('go_btn,pulse,dose,abort');
  });

  it('cuts the synthesis report into titled sections', () => {
    const s = reportSections('m: title\n\nDatapath\n  registers\n    r\n\nEquations (x)\n  y = a\n\nCost: 1 flip-flop\n');
    expect(s).toEqual([
      { id: 'datapath', title: 'Datapath', text: 'registers\n  r' },
      { id: 'equations', title: 'Equations (x)', text: 'y = a' },
      { id: 'cost', title: 'Cost: 1 flip-flop', text: '' },
    ]);
  });
});
