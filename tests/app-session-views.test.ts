// The renderer's new pieces without a browser: waveform centring, diff spans and markers, the session store
// fed with job events, the job router, fault presets, the simulate screen's event folding, rendered markup.
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, it } from 'vitest';
import { checkDesign } from '../core/check/checker';
import { parseFaultSpec } from '../core/probe/faults';
import type { DivergenceView, JobEvent, SimulationView } from '../core/services/api';
import { summarize } from '../main/services/describe';
import { isFinal, JobRouter } from '../renderer/api/client';
import { bytesToBase64, faultPresets } from '../renderer/bench/BenchScreen';
import { clockHz } from '../renderer/hdl/HdlScreen';
import { SessionScreen } from '../renderer/session/SessionScreen';
import { applySessionEvent, emptySession, sessionWave, stepDivergence, ZERO_COUNTERS } from '../renderer/session/store';
import { CounterStrip } from '../renderer/session/widgets';
import { applySimEvent, foldSimData, type SimState } from '../renderer/sim/SimulateScreen';
import { valueText } from '../renderer/sim/WaveCanvas';
import { appendChunk, centreCycle, centreOn, diffSpans, lowerBound, markersInView } from '../renderer/sim/waveform';

const dir = path.join(__dirname, '..', 'fixtures');
const demo = readFileSync(path.join(dir, 'tank_dosing.tsm'), 'utf8');

describe('waveform helpers for sessions', () => {
  it('centres a cycle, zooming in only when the view is too far out to read values', () => {
    const far = centreOn({ start: 0, cyclesPerPx: 10 }, 5000, 800, 100_000);
    expect(far.cyclesPerPx).toBe(1 / 8);
    expect(centreCycle(far, 800)).toBe(5000);
    const near = centreOn({ start: 0, cyclesPerPx: 1 / 40 }, 300, 800, 100_000);
    expect(near.cyclesPerPx).toBe(1 / 40);
    expect(centreCycle(near, 800)).toBe(300);
    // Near the start the view cannot go below cycle 0.
    expect(centreOn({ start: 500, cyclesPerPx: 1 / 8 }, 3, 800, 100_000).start).toBe(0);
  });

  it('finds the spans where board and model differ by walking both change lists', () => {
    const board = { at: [0, 10, 20, 30], values: ['1', '2', '3', '4'] };
    const model = { at: [0, 10, 15, 20, 30], values: ['1', '2', '9', '3', '5'] };
    expect(diffSpans(board, model, 0, 40)).toEqual([
      { from: 15, to: 20 },
      { from: 30, to: 40 },
    ]);
    expect(diffSpans(board, model, 16, 18)).toEqual([{ from: 16, to: 18 }]);
    expect(diffSpans(board, board, 0, 40)).toEqual([]);
    expect(diffSpans(board, model, 0, 40, 2)).toEqual([]); // stopped early: at most maxSteps changes walked
  });

  it('keeps one marker per pixel column and only those in view', () => {
    const markers = [3, 4, 5, 40, 41, 90, 200];
    expect(markersInView(markers, 0, 100, 1)).toEqual([3, 4, 5, 40, 41, 90]);
    expect(markersInView(markers, 0, 100, 10)).toEqual([3, 40, 90]);
    expect(markersInView(markers, 41, 201, 1)).toEqual([41, 90, 200]);
    expect(lowerBound(markers, 41)).toBe(4);
    expect(lowerBound(markers, 1000)).toBe(markers.length);
  });

  it('appends pushed entries without repeating an unchanged value', () => {
    const t = [{ at: [0, 5], values: ['1', '0'] }];
    appendChunk(t, [{ at: [9, 12], values: ['0', '7'] }]);
    expect(t[0]).toEqual({ at: [0, 5, 12], values: ['1', '0', '7'] });
  });

  it('names a state code no state has', () => {
    expect(valueText({ group: 'state', width: 2, signed: false }, '5', 'dec', ['A', 'B', 'C'])).toBe('code 2');
    expect(valueText({ group: 'state', width: 2, signed: false }, '1', 'dec', ['A', 'B', 'C'])).toBe('B');
  });
});

const meta = [
  { name: 'go', group: 'input' as const, width: 1, signed: false },
  { name: 'state', group: 'state' as const, width: 2, signed: false },
  { name: 'count', group: 'register' as const, width: 8, signed: false },
];
const div = (sample: number, over: Partial<DivergenceView> = {}): DivergenceView => ({
  sample,
  cycle: sample,
  sinceReset: sample,
  signal: 'reg.count',
  track: 2,
  group: 'register',
  expected: '3',
  actual: '7',
  expectedBits: '00000011',
  actualBits: '00000111',
  differingBits: [2],
  state: 'Run',
  expectedState: 'Run',
  transition: { from: 'Run', expected: 'Run', board: 'Run' },
  explanation: 'count loaded 7 though its source gives 3',
  inputsChanged: ['go'],
  ...over,
});

function liveSession() {
  const job = 4;
  const events: JobEvent[] = [
    { job, type: 'session-start', source: 'emulator', title: 'emulated board · m', stateNames: ['Idle', 'Run'], tracks: meta, compared: [false, true, true], capture: '/tmp/m.twcap', notes: ['emulated board'] },
    {
      job,
      type: 'session-delta',
      tracks: [
        { at: [0, 3], values: ['0', '1'] },
        { at: [0, 4], values: ['0', '1'] },
        { at: [0, 5], values: ['0', '7'] },
      ],
      expected: [
        { at: [], values: [] },
        { at: [0, 4], values: ['0', '1'] },
        { at: [0, 5], values: ['0', '3'] },
      ],
      divergences: [div(5)],
      log: [{ sample: 0, kind: 'identity', text: 'identification' }],
      counters: { ...ZERO_COUNTERS, samples: 8, cycleFrames: 8, divergences: 1, divergentCycles: 1 },
      capped: false,
    },
    {
      job,
      type: 'session-delta',
      tracks: [{ at: [8], values: ['1'] }, { at: [], values: [] }, { at: [9], values: ['8'] }],
      expected: [{ at: [], values: [] }, { at: [], values: [] }, { at: [9], values: ['4'] }],
      divergences: [div(9, { expected: '4', actual: '8' }), div(9, { signal: 'state', track: 1, group: 'state', state: 'Idle', expectedState: 'Run' })],
      log: [],
      counters: { ...ZERO_COUNTERS, samples: 12, cycleFrames: 12, divergences: 3, divergentCycles: 2 },
      capped: false,
    },
  ];
  return events.reduce((d, e) => applySessionEvent(d, e), emptySession(job, 'emulator', 'starting'));
}

describe('the session store', () => {
  it('builds tracks, expected tracks, markers and the divergence list from pushed events', () => {
    const d = liveSession();
    expect(d.status).toBe('live');
    expect(d.tracks[0]).toMatchObject({ name: 'go', at: [0, 3], values: ['0', '1'] });
    expect(d.tracks[2]).toMatchObject({ at: [0, 5, 9], values: ['0', '7', '8'] });
    expect(d.expected[0]).toBeNull();
    expect(d.expected[2]).toMatchObject({ at: [0, 5, 9], values: ['0', '3', '4'] });
    expect(d.markers).toEqual([5, 9]);
    expect([...d.diverged].sort()).toEqual([1, 2]);
    expect(d.divergences).toHaveLength(3);
    expect(sessionWave(d)).toMatchObject({ cycles: 12, stateNames: ['Idle', 'Run'] });
    const ended = applySessionEvent(d, { job: 4, type: 'session-end', reason: 'disconnected', summary: 'DIVERGED: ...', hints: [{ cause: 'stuck-bit', text: 'Bit 2 of reg.count may be stuck at 1.', evidence: 'e' }], counters: d.counters });
    expect(ended).toMatchObject({ status: 'ended', reason: 'disconnected' });
    expect(applySessionEvent(ended, { job: 4, type: 'cancelled' }).status).toBe('ended');
    expect(applySessionEvent(d, { job: 4, type: 'failed', error: 'port gone', diagnostics: [] })).toMatchObject({ status: 'failed', reason: 'port gone' });
  });

  it('steps through divergences both ways, wrapping at the ends', () => {
    expect(stepDivergence(0, -1, 1)).toBe(-1);
    expect(stepDivergence(3, -1, 1)).toBe(0);
    expect(stepDivergence(3, -1, -1)).toBe(2);
    expect(stepDivergence(3, 2, 1)).toBe(0);
    expect(stepDivergence(3, 0, -1)).toBe(2);
  });

  it('renders the divergence list, the waiting text and the counters', () => {
    const m = checkDesign(demo).machine!;
    const check = { diagnostics: [], machine: summarize(m), fingerprint: 'f' };
    const noop = () => {};
    const html = renderToStaticMarkup(createElement(SessionScreen, { session: liveSession(), check, onCommand: noop, onStop: noop, onOpenBench: noop }));
    expect(html).toContain('data-testid="divergence-list"');
    expect(html.match(/data-sample="/g)).toHaveLength(3);
    expect(html).toContain('reg.count');
    expect(html).toContain('● live');
    expect(renderToStaticMarkup(createElement(SessionScreen, { session: null, check, onCommand: noop, onStop: noop, onOpenBench: noop }))).toContain('No session yet');
    const counters = renderToStaticMarkup(createElement(CounterStrip, { counters: { ...ZERO_COUNTERS, cycleFrames: 1234, crcErrors: 2 } }));
    expect(counters).toContain('1,234');
    expect(counters).toMatch(/class="counter bad" data-counter="crcErrors"/);
  });
});

describe('the job router', () => {
  it('keeps events that arrive before their job is registered, then delivers them in order', () => {
    const r = new JobRouter();
    const got: string[] = [];
    r.receive({ job: 2, type: 'progress', done: 1, total: 3, unit: 'cycles', message: 'm' });
    r.receive({ job: 2, type: 'progress', done: 2, total: 3, unit: 'cycles', message: 'm' });
    r.register(2, (e) => got.push(`${e.type}:${e.type === 'progress' ? e.done : ''}`));
    r.receive({ job: 2, type: 'done', message: 'ok' });
    r.receive({ job: 2, type: 'progress', done: 9, total: 3, unit: 'cycles', message: 'after the end' });
    expect(got).toEqual(['progress:1', 'progress:2', 'done:']);
  });

  it('ignores malformed events and says why', () => {
    const r = new JobRouter();
    const problems: string[] = [];
    r.receive({ job: 'x', type: 'done' }, (m) => problems.push(m));
    r.receive({ job: 1, type: 'explode' }, (m) => problems.push(m));
    expect(problems).toHaveLength(2);
    expect(problems[0]).toMatch(/job/);
    expect(isFinal({ job: 1, type: 'cancelled' })).toBe(true);
    expect(isFinal({ job: 1, type: 'progress', done: 0, total: null, unit: 'b', message: '' })).toBe(false);
  });
});

describe('screen helpers', () => {
  it('offers fault presets that the emulator accepts, for every demo', () => {
    for (const file of readdirSync(dir).filter((f) => f.endsWith('.tsm'))) {
      const m = checkDesign(readFileSync(path.join(dir, file), 'utf8')).machine!;
      const presets = faultPresets(summarize(m));
      expect(presets.length).toBeGreaterThanOrEqual(3);
      for (const p of presets) expect(parseFaultSpec(p.spec, m), `${file}: ${p.spec}`).toMatchObject({ ok: true });
    }
  });

  it('reads the clock in MHz', () => {
    expect(clockHz('12')).toBe(12_000_000);
    expect(clockHz(' 100.5 ')).toBe(100_500_000);
    for (const bad of ['', '0', '-3', 'fast', 'NaN']) expect(clockHz(bad)).toBeNull();
  });

  it('encodes uploads as base64 the same way Node does', () => {
    const bytes = Uint8Array.from({ length: 100_000 }, (_, i) => (i * 7 + 3) & 255);
    expect(bytesToBase64(bytes)).toBe(Buffer.from(bytes).toString('base64'));
  });

  it('folds simulation events into the screen state', () => {
    let s: SimState = { source: 'random', cycles: 10, seed: 1, csv: '', radix: 'dec', result: null, running: true, error: null, progress: null, job: null, runId: 1 };
    let data: SimulationView | null = null;
    const apply = (e: JobEvent) => {
      data = foldSimData(data, e);
      // The state update itself is pure: applying it twice (as React may) changes nothing.
      const once = applySimEvent(s, e, data);
      expect(applySimEvent(s, e, data)).toEqual(once);
      s = once;
    };
    apply({ job: 1, type: 'sim-start', stateNames: ['A'], tracks: [meta[0]] });
    apply({ job: 1, type: 'sim-chunk', cycles: 5, tracks: [{ at: [0, 2], values: ['0', '1'] }] });
    apply({ job: 1, type: 'progress', done: 5, total: 10, unit: 'cycles', message: '' });
    expect(s.progress).toEqual({ done: 5, total: 10 });
    apply({ job: 1, type: 'sim-chunk', cycles: 10, tracks: [{ at: [5], values: ['1'] }] });
    expect(s.result).toMatchObject({ cycles: 10, tracks: [{ at: [0, 2], values: ['0', '1'] }] });
    const cancelled = applySimEvent(s, { job: 1, type: 'cancelled' }, data);
    expect(cancelled).toMatchObject({ running: false, error: expect.stringMatching(/cancelled after 10 cycles/) });
    const failed = applySimEvent(s, { job: 1, type: 'failed', error: 'the stimulus has errors', diagnostics: [{ severity: 'error', line: 2, col: 5, message: "'lots' is not a number", hint: 'h' }] }, data);
    expect(failed.result).toMatchObject({ cycles: 0, stimulusSource: 'stimulus' });
  });
});
