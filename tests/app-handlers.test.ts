// The service handlers as plain functions, through the same dispatcher both shells use: good calls
// answer values that match the declared result schemas; malformed messages are refused with a reason.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { checkDesign } from '../core/check/checker';
import { simulate } from '../core/model/trace';
import { randomStimulus } from '../core/model/stimulus';
import { RESULT_SCHEMAS, type ApiMethod, type ApiReply, type ResultOf } from '../core/services/api';
import { createHandlers, dispatch } from '../main/services/handlers';

const demoDir = path.join(__dirname, '..', 'fixtures');
const handlers = createHandlers({ shell: 'serve', version: 'test', demoDir });
const demo = readFileSync(path.join(demoDir, 'tank_dosing.tsm'), 'utf8');

async function ok<M extends ApiMethod>(method: M, params?: unknown): Promise<ResultOf<M>> {
  const reply = await dispatch(handlers, { method, params });
  if (!reply.ok) throw new Error(`${method} failed: ${reply.error.code}: ${reply.error.message}`);
  // Every value that leaves a handler must match the schema the renderer validates against.
  return RESULT_SCHEMAS[method].parse(reply.value) as ResultOf<M>;
}

async function refused(message: unknown): Promise<Extract<ApiReply<unknown>, { ok: false }>['error']> {
  const reply = await dispatch(handlers, message);
  expect(reply.ok).toBe(false);
  if (reply.ok) throw new Error('accepted');
  return reply.error;
}

describe('malformed messages are refused before any handler runs', () => {
  it.each([
    ['null', null],
    ['a string', 'design.check'],
    ['an array', [{ method: 'design.check' }]],
    ['no method', { params: {} }],
    ['an unknown method', { method: 'design.erase', params: {} }],
    ['missing params', { method: 'design.check' }],
    ['text of the wrong type', { method: 'design.check', params: { text: 42 } }],
    ['a path as the file name', { method: 'design.check', params: { text: 'x', file: '../../etc/passwd' } }],
    ['a demo id that climbs out of the folder', { method: 'files.readDemo', params: { id: '../package' } }],
    ['zero cycles', { method: 'design.simulate', params: { text: demo, stimulus: { kind: 'random', cycles: 0, seed: 1 } } }],
    ['too many cycles', { method: 'design.simulate', params: { text: demo, stimulus: { kind: 'random', cycles: 1_000_001, seed: 1 } } }],
    ['a negative seed', { method: 'design.simulate', params: { text: demo, stimulus: { kind: 'random', cycles: 10, seed: -1 } } }],
    ['an unknown stimulus kind', { method: 'design.simulate', params: { text: demo, stimulus: { kind: 'vcd' } } }],
    ['an unknown encoding', { method: 'synth.run', params: { text: demo, encoding: 'johnson' } }],
    ['extra params on a call that takes none', { method: 'safety.notes', params: { all: true } }],
  ])('%s', async (_what, message) => {
    const error = await refused(message);
    expect(error.code).toBe('bad-request');
    expect(error.message.length).toBeGreaterThan(5);
  });

  it('names the offending field', async () => {
    const error = await refused({ method: 'design.simulate', params: { text: demo, stimulus: { kind: 'random', cycles: 10, seed: 'x' } } });
    expect(error.message).toContain('params.stimulus.seed');
  });

  it('refuses a design text over the size limit without parsing it', async () => {
    const error = await refused({ method: 'design.check', params: { text: 'x'.repeat(1_000_001) } });
    expect(error.message).toMatch(/longer than/);
  });
});

describe('design.check', () => {
  it('summarizes the demo: signals, states, and transitions printed back in the design language', async () => {
    const r = await ok('design.check', { text: demo, file: 'tank_dosing.tsm' });
    expect(r.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    expect(r.fingerprint).toMatch(/^[0-9a-f]{64}$/);
    const m = r.machine!;
    expect(m.name).toBe('tank_dosing');
    expect(m.states.map((s) => s.name)).toEqual(['Idle', 'Prime', 'Pump', 'Finish']);
    expect(m.states[0].initial).toBe(true);
    expect(m.inputs.find((s) => s.name === 'dose')).toEqual({ name: 'dose', width: 8, signed: false });
    const idleGo = m.edges.find((e) => e.from === 0)!;
    expect(idleGo.to).toBe(1);
    expect(idleGo.condition).toMatch(/^go_btn and dose != 0 and dose <= (MAX_DOSE|200)$/);
    expect(idleGo.actions).toEqual(['target <- dose', 'poured <- 0']);
    const pumpEdges = m.edges.filter((e) => e.from === 2);
    expect(pumpEdges.map((e) => [e.priority, e.condition])).toEqual([
      [0, 'abort'],
      [1, 'poured == target'],
      [2, 'pulse'],
    ]);
    expect(m.states[3].actions).toContain('runs <- runs + 1');
  });

  it('returns diagnostics with line and column and no machine when the design has an error', async () => {
    const broken = demo.replace('go Pump\n', 'go Pmup\n');
    const r = await ok('design.check', { text: broken });
    expect(r.machine).toBeNull();
    expect(r.fingerprint).toBeNull();
    const d = r.diagnostics.find((x) => x.severity === 'error')!;
    expect(d.message).toContain("no state named 'Pmup'");
    expect(d.line).toBe(broken.split('\n').findIndex((l) => l.includes('go Pmup')) + 1);
  });

  it('answers garbage text with diagnostics, not a fault', async () => {
    const r = await ok('design.check', { text: '\u0000\u0001 state state state <- <- ((((' });
    expect(r.machine).toBeNull();
    expect(r.diagnostics.length).toBeGreaterThan(0);
  });
});

describe('design.simulate', () => {
  const random = (seed: number, cycles = 500) => ok('design.simulate', { text: demo, stimulus: { kind: 'random', cycles, seed } });

  it('is reproducible for a seed and differs between seeds', async () => {
    const a = await random(11);
    const b = await random(11);
    const c = await random(12);
    expect(a).toEqual(b);
    expect(a.tracks).not.toEqual(c.tracks);
  });

  it('gives change lists that replay the model trace cycle by cycle', async () => {
    const r = await random(3, 300);
    const m = checkDesign(demo).machine!;
    const trace = simulate(m, randomStimulus(m, 300, 3));
    expect(r.cycles).toBe(300);
    expect(r.stateNames).toEqual(['Idle', 'Prime', 'Pump', 'Finish']);
    expect(r.tracks.map((t) => `${t.group}:${t.name}`)).toEqual([
      'input:go_btn', 'input:pulse', 'input:dose', 'input:abort', 'state:state', 'register:target', 'register:poured', 'register:runs',
      'output:pump', 'output:valve', 'output:done', 'output:shown',
    ]);
    const valueAt = (t: (typeof r.tracks)[number], cycle: number) => {
      let k = 0;
      while (k + 1 < t.at.length && t.at[k + 1] <= cycle) k++;
      return t.values[k];
    };
    for (const row of trace) {
      expect(valueAt(r.tracks[4], row.cycle)).toBe(String(row.state));
      expect(valueAt(r.tracks[6], row.cycle)).toBe(row.regs[1].toString());
      expect(valueAt(r.tracks[11], row.cycle)).toBe(row.outputs[3].toString());
    }
    // A change list holds only changes.
    for (const t of r.tracks) for (let k = 1; k < t.values.length; k++) expect(t.values[k]).not.toBe(t.values[k - 1]);
  });

  it('runs a CSV stimulus', async () => {
    const csv = readFileSync(path.join(demoDir, 'tank_dosing.csv'), 'utf8');
    const r = await ok('design.simulate', { text: demo, stimulus: { kind: 'csv', csv } });
    expect(r.diagnostics).toEqual([]);
    expect(r.cycles).toBe(csv.trim().split('\n').length - 1);
  });

  it('reports stimulus problems as diagnostics naming the row and column', async () => {
    const r = await ok('design.simulate', { text: demo, stimulus: { kind: 'csv', csv: 'go_btn,pulse,dose,abort\n1,0,lots,0\n' } });
    expect(r.cycles).toBe(0);
    expect(r.stimulusSource).toBe('stimulus');
    expect(r.diagnostics[0]).toMatchObject({ line: 2, col: 5 });
    expect(r.diagnostics[0].message).toContain("'lots'");
  });

  it('reports design errors instead of simulating', async () => {
    const r = await ok('design.simulate', { text: 'machine m\nstate A\n  go B\n', stimulus: { kind: 'random', cycles: 10, seed: 1 } });
    expect(r.stimulusSource).toBe('design');
    expect(r.diagnostics.some((d) => d.message.includes("'B'"))).toBe(true);
  });
});

describe('synthesis', () => {
  it('changes the encoding and equations with the chosen encoding', async () => {
    const binary = await ok('synth.run', { text: demo, encoding: 'binary' });
    const onehot = await ok('synth.run', { text: demo, encoding: 'onehot' });
    const eq = (r: typeof binary) => r.sections.find((s) => s.id === 'equations')!.text;
    expect(eq(binary)).toMatch(/q\d' =/);
    expect(eq(binary)).not.toBe(eq(onehot));
    expect(binary.sections.find((s) => s.id === 'encoding')!.title).toMatch(/binary, 2 flip-flops/);
    expect(onehot.sections.find((s) => s.id === 'encoding')!.title).toMatch(/onehot, 4 flip-flops/);
    expect(binary.sections.map((s) => s.id)).toEqual(expect.arrayContaining(['datapath', 'controller', 'encoding', 'equations', 'cost']));
  });

  it('compares encodings side by side, marking custom unavailable when the design gives no codes', async () => {
    const r = await ok('synth.compare', { text: demo });
    const byLabel = new Map(r.columns.map((c) => [c.label, c]));
    expect(byLabel.get('binary')!.metrics.flipFlops).toBe(2);
    expect(byLabel.get('onehot')!.metrics.flipFlops).toBe(4);
    expect(byLabel.get('custom')!.available).toBe(false);
    expect(byLabel.get('custom')!.note.length).toBeGreaterThan(0);
    expect(r.metricNames.map((x) => x.key)).toEqual(['flipFlops', 'products', 'literals', 'gates2']);
  });

  it('answers a synthesis failure as a diagnostic', async () => {
    const r = await ok('synth.run', { text: demo, encoding: 'custom' });
    expect(r.sections).toEqual([]);
    expect(r.diagnostics[0].severity).toBe('error');
  });

  it('says "unavailable" when the build has no synthesis', async () => {
    const bare = createHandlers({ shell: 'serve', version: 'test', demoDir, synth: null });
    const reply = await dispatch(bare, { method: 'synth.run', params: { text: demo, encoding: 'binary' } });
    expect(reply).toMatchObject({ ok: false, error: { code: 'unavailable' } });
    const info = await dispatch(bare, { method: 'app.info' });
    expect(info).toMatchObject({ ok: true, value: { features: { synth: false, simulate: true, hdl: false } } });
  });
});

describe('files and notes', () => {
  it('lists the bundled demos with their first comment line', async () => {
    const r = await ok('files.listDemos');
    const tank = r.demos.find((d) => d.id === 'tank_dosing')!;
    expect(tank.file).toBe('tank_dosing.tsm');
    expect(tank.summary).toBe('Dosing pump for a small chemical tank (demo scenario).');
  });

  it('reads a demo, and says which one is missing', async () => {
    expect((await ok('files.readDemo', { id: 'tank_dosing' })).text).toBe(demo);
    const error = await refused({ method: 'files.readDemo', params: { id: 'no_such_demo' } });
    expect(error).toEqual({ code: 'not-found', message: "there is no demo named 'no_such_demo'" });
  });

  it('names an unreadable demo folder', async () => {
    const lost = createHandlers({ shell: 'serve', version: 'test', demoDir: '/nonexistent/twinstep-demos' });
    const reply = await dispatch(lost, { method: 'files.listDemos' });
    expect(reply).toMatchObject({ ok: false, error: { code: 'not-found' } });
    expect(!reply.ok && reply.error.message).toContain('/nonexistent/twinstep-demos');
  });

  it('gives the bench safety notes: supply, adapter levels, ESD, hot-plugging, and the deferral', async () => {
    const r = await ok('safety.notes');
    const all = JSON.stringify(r);
    expect(r.sections.map((s) => s.id)).toEqual(['supply', 'levels', 'esd', 'hotplug']);
    for (const needle of ['current limit', 'olarity', '3.3 V', '5 V', 'wrist strap', 'ESD mat', 'ANSI/ESD S20.20', 'powered']) expect(all).toContain(needle);
    expect(r.deferral).toMatch(/lab's own rules/);
    expect(r.deferral).toMatch(/board maker's documentation/);
  });

  it('reports the shell and features', async () => {
    expect(await ok('app.info')).toEqual({ name: 'Twinstep', version: 'test', shell: 'serve', features: { simulate: true, synth: true, hdl: true, jobs: true, folderExport: false } });
  });
});
