// The new service methods through the dispatcher both shells use: HDL generation and export, jobs with pushed
// events (simulate, bench sessions on the emulated board, replay), cancelling, board commands, and refusals.
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { checkDesign } from '../core/check/checker';
import { randomStimulus } from '../core/model/stimulus';
import { simulate } from '../core/model/trace';
import { JobEventSchema, RESULT_SCHEMAS, type ApiMethod, type JobEvent, type ResultOf } from '../core/services/api';
import { traceToTracks } from '../main/services/tracks';
import { createHandlers, dispatch } from '../main/services/handlers';
import { JobManager, type Caller } from '../main/services/jobs';

const demoDir = path.join(__dirname, '..', 'fixtures');
const demo = readFileSync(path.join(demoDir, 'tank_dosing.tsm'), 'utf8');
const stamper = readFileSync(path.join(demoDir, 'event_stamper.tsm'), 'utf8');
const captureDir = mkdtempSync(path.join(os.tmpdir(), 'twinstep-app-jobs-'));
const jobs = new JobManager();
const handlers = createHandlers({ shell: 'serve', version: 'test', demoDir, captureDir, jobs });

afterAll(() => rmSync(captureDir, { recursive: true, force: true }));

/** A caller that keeps every event, checking each against the event schema the renderer validates with. */
function recorder(id: string) {
  const events: JobEvent[] = [];
  const caller: Caller = {
    id,
    emit: (e) => {
      // Round-trip through JSON as the WebSocket does, then validate.
      events.push(JobEventSchema.parse(JSON.parse(JSON.stringify(e))));
    },
  };
  const of = (job: number) => events.filter((e) => e.job === job);
  const until = async (job: number, pred: (es: JobEvent[]) => boolean, timeout = 20_000) => {
    const t0 = Date.now();
    while (!pred(of(job))) {
      if (Date.now() - t0 > timeout) throw new Error(`job ${job}: timed out; events: ${of(job).map((e) => e.type).join(' ')}`);
      await new Promise((r) => setTimeout(r, 20));
    }
    return of(job);
  };
  const final = (job: number) => until(job, (es) => es.some((e) => e.type === 'done' || e.type === 'failed' || e.type === 'cancelled'));
  return { caller, events, of, until, final };
}

async function ok<M extends ApiMethod>(method: M, params?: unknown, caller: Caller | null = null): Promise<ResultOf<M>> {
  const reply = await dispatch(handlers, { method, params }, caller);
  if (!reply.ok) throw new Error(`${method} failed: ${reply.error.code}: ${reply.error.message}`);
  return RESULT_SCHEMAS[method].parse(reply.value) as ResultOf<M>;
}

async function refused(message: unknown, caller: Caller | null = null) {
  const reply = await dispatch(handlers, message, caller);
  if (reply.ok) throw new Error(`accepted: ${JSON.stringify(message).slice(0, 200)}`);
  return reply.error;
}

const hdlParams = (over: Record<string, unknown> = {}) => ({ text: demo, encoding: 'binary', controller: 'behavioral', reset: 'low', probe: { clockHz: 12_000_000, baud: 115200, startHalted: false }, ...over });
const benchParams = (over: Record<string, unknown> = {}) => ({
  kind: 'bench',
  text: demo,
  encoding: 'binary',
  link: { kind: 'emulator', faults: [], seed: 3, baud: 1_000_000 },
  record: false,
  hostInputs: null,
  safetyAcknowledged: true,
  ...over,
});
const frames = (es: JobEvent[]) => {
  const deltas = es.filter((e) => e.type === 'session-delta');
  return deltas.length ? deltas[deltas.length - 1].counters.cycleFrames : 0;
};

describe('hdl.generate', () => {
  it('gives the design files and the probe files, each starting with its header', async () => {
    const r = await ok('hdl.generate', hdlParams());
    expect(r.diagnostics).toEqual([]);
    expect(r.probeError).toBeNull();
    const design = r.files.filter((f) => f.group === 'design').map((f) => f.name);
    expect(design).toEqual(['tank_dosing_ctrl.v', 'tank_dosing_dp.v', 'tank_dosing_top.v']);
    const probe = r.files.filter((f) => f.group === 'probe').map((f) => f.name);
    expect(probe).toContain('tank_dosing_board.v');
    expect(probe).toContain('ts_uart_tx.v');
    const ctrl = r.files[0];
    expect(ctrl.text.startsWith('// tank_dosing_ctrl.v: controller')).toBe(true);
    expect(ctrl.role).toMatch(/^controller/);
    expect(ctrl.text).toContain('State encoding: binary, 2 flip-flops; controller style: behavioral; reset pin active low.');
    expect(r.notes.join('\n')).toMatch(/divisor 104/);
  });

  it('follows the encoding, controller style and reset polarity', async () => {
    const r = await ok('hdl.generate', hdlParams({ encoding: 'onehot', controller: 'equations', reset: 'high', probe: null }));
    expect(r.files.map((f) => f.group)).toEqual(['design', 'design', 'design']);
    expect(r.files[0].text).toContain('State encoding: onehot, 4 flip-flops; controller style: equations; reset pin active high.');
    expect(r.files[2].text).toMatch(/input\s+wire\s+rst\b/);
  });

  it('names the probe problem when the clock cannot make the baud, and still gives the design files', async () => {
    const r = await ok('hdl.generate', hdlParams({ probe: { clockHz: 1_000_000, baud: 921600, startHalted: false } }));
    expect(r.files).toHaveLength(3);
    expect(r.probeError).toMatch(/cannot reach 921600 baud/);
  });

  it('answers design errors and a failing encoding as diagnostics', async () => {
    const broken = await ok('hdl.generate', hdlParams({ text: demo.replace('go Pump\n', 'go Pmup\n') }));
    expect(broken.files).toEqual([]);
    expect(broken.diagnostics[0].message).toContain("'Pmup'");
    const custom = await ok('hdl.generate', hdlParams({ encoding: 'custom' }));
    expect(custom.files).toEqual([]);
    expect(custom.diagnostics[0].message).toMatch(/synthesis failed/);
  });
});

describe('hdl.exportFolder', () => {
  it('is unavailable without the desktop folder dialog', async () => {
    expect(await refused({ method: 'hdl.exportFolder', params: hdlParams() })).toMatchObject({ code: 'unavailable' });
  });

  it('writes the generated files into the chosen folder, and nothing when the dialog is cancelled', async () => {
    const folder = path.join(captureDir, 'export');
    let answer: string | null = folder;
    const desk = createHandlers({ shell: 'electron', version: 'test', demoDir, captureDir, pickFolder: async () => answer });
    const r = await dispatch(desk, { method: 'hdl.exportFolder', params: hdlParams() });
    expect(r.ok).toBe(true);
    const value = RESULT_SCHEMAS['hdl.exportFolder'].parse(r.ok && r.value);
    expect(value.folder).toBe(folder);
    const generated = await ok('hdl.generate', hdlParams());
    expect(readdirSync(folder).sort()).toEqual(generated.files.map((f) => f.name).sort());
    for (const f of generated.files) expect(readFileSync(path.join(folder, f.name), 'utf8')).toBe(f.text);
    answer = null;
    expect(await dispatch(desk, { method: 'hdl.exportFolder', params: hdlParams() })).toEqual({ ok: true, value: { folder: null, written: [] } });
    expect(await dispatch(desk, { method: 'app.info' })).toMatchObject({ ok: true, value: { features: { folderExport: true } } });
  });
});

describe('malformed job and bench messages are refused', () => {
  const { caller } = recorder('refusals');
  it.each([
    ['a bench session without the safety acknowledgement', { method: 'job.start', params: benchParams({ safetyAcknowledged: false }) }, /safety/],
    ['an unknown link kind', { method: 'job.start', params: benchParams({ link: { kind: 'bluetooth' } }) }, /link/],
    ['too many faults', { method: 'job.start', params: benchParams({ link: { kind: 'emulator', faults: Array(17).fill('drop:5'), seed: 1, baud: 115200 } }) }, /faults/],
    ['a baud of zero', { method: 'job.start', params: benchParams({ link: { kind: 'emulator', faults: [], seed: 1, baud: 0 } }) }, /baud/],
    ['a capture name that climbs out of the folder', { method: 'job.start', params: { kind: 'replay', text: demo, source: { kind: 'folder', name: '../../etc/x.twcap' } } }, /source\.name/],
    ['an upload that is not base64', { method: 'job.start', params: { kind: 'replay', text: demo, source: { kind: 'upload', name: 'x', base64: 'not base64!' } } }, /base64/],
    ['an unknown job kind', { method: 'job.start', params: { kind: 'synthesize', text: demo } }, /kind/],
    ['a job id of zero', { method: 'job.cancel', params: { job: 0 } }, /job/],
    ['a step of zero cycles', { method: 'bench.command', params: { job: 1, command: { kind: 'step', cycles: 0 } } }, /cycles/],
    ['an unknown board command', { method: 'bench.command', params: { job: 1, command: { kind: 'erase' } } }, /command/],
    ['extra keys on a probe setting', { method: 'hdl.generate', params: hdlParams({ probe: { clockHz: 1e7, baud: 115200, startHalted: false, pins: 'A1' } }) }, /probe/],
    ['a negative clock', { method: 'hdl.generate', params: hdlParams({ probe: { clockHz: -5, baud: 115200, startHalted: false } }) }, /clockHz/],
  ])('%s', async (_what, message, field) => {
    const error = await refused(message, caller);
    expect(error.code).toBe('bad-request');
    expect(error.message).toMatch(field);
  });

  it('needs a live connection for jobs, and a running session for board commands', async () => {
    expect(await refused({ method: 'job.start', params: { kind: 'simulate', text: demo, stimulus: { kind: 'random', cycles: 10, seed: 1 } } })).toMatchObject({ code: 'unavailable' });
    expect(await refused({ method: 'bench.command', params: { job: 999, command: { kind: 'halt' } } }, caller)).toMatchObject({ code: 'not-found' });
  });

  it('refuses a job on a design with errors, naming the line', async () => {
    const error = await refused({ method: 'job.start', params: benchParams({ text: demo.replace('go Pump\n', 'go Pmup\n') }) }, caller);
    expect(error).toMatchObject({ code: 'bad-request' });
    expect(error.message).toMatch(/line \d+:\d+: .*'Pmup'/);
  });
});

/** Rebuilds whole tracks from a simulation job's events. */
function tracksFrom(es: JobEvent[]) {
  const start = es.find((e) => e.type === 'sim-start');
  if (!start || start.type !== 'sim-start') throw new Error('no sim-start');
  const tracks = start.tracks.map((t) => ({ ...t, at: [] as number[], values: [] as string[] }));
  for (const e of es) {
    if (e.type !== 'sim-chunk') continue;
    e.tracks.forEach((c, k) => {
      tracks[k].at.push(...c.at);
      tracks[k].values.push(...c.values);
    });
  }
  return tracks;
}

describe('simulate jobs', () => {
  it('stream chunks with progress that add up to the model trace, wide registers included', async () => {
    const rec = recorder('sim');
    const { job } = await ok('job.start', { kind: 'simulate', text: stamper, stimulus: { kind: 'random', cycles: 250_000, seed: 5 } }, rec.caller);
    const es = await rec.final(job);
    expect(es[es.length - 1].type).toBe('done');
    const progress = es.filter((e) => e.type === 'progress');
    expect(progress.length).toBeGreaterThanOrEqual(3);
    expect(progress[progress.length - 1]).toMatchObject({ done: 250_000, total: 250_000 });
    const m = checkDesign(stamper).machine!;
    const expected = traceToTracks(m, simulate(m, randomStimulus(m, 250_000, 5)));
    expect(tracksFrom(es)).toEqual(expected);
  });

  it('reports stimulus problems as a failed job with located diagnostics', async () => {
    const rec = recorder('sim-bad');
    const { job } = await ok('job.start', { kind: 'simulate', text: demo, stimulus: { kind: 'csv', csv: 'go_btn,pulse,dose,abort\n1,0,lots,0\n' } }, rec.caller);
    const es = await rec.final(job);
    const failed = es.find((e) => e.type === 'failed');
    expect(failed && failed.type === 'failed' && failed.diagnostics[0]).toMatchObject({ line: 2, col: 5 });
  });

  it('stops when cancelled, and only its own caller may cancel it', async () => {
    const rec = recorder('sim-cancel');
    const other = recorder('someone-else');
    const { job } = await ok('job.start', { kind: 'simulate', text: demo, stimulus: { kind: 'random', cycles: 1_000_000, seed: 1 } }, rec.caller);
    await rec.until(job, (es) => es.some((e) => e.type === 'sim-chunk'));
    expect(await ok('job.cancel', { job }, other.caller)).toEqual({ cancelled: false });
    expect(await ok('job.cancel', { job }, rec.caller)).toEqual({ cancelled: true });
    const es = await rec.final(job);
    expect(es[es.length - 1].type).toBe('cancelled');
    const chunks = es.filter((e) => e.type === 'sim-chunk');
    expect(chunks[chunks.length - 1].type === 'sim-chunk' && chunks[chunks.length - 1]).toMatchObject({ cycles: expect.any(Number) });
    const last = chunks[chunks.length - 1];
    expect(last.type === 'sim-chunk' && last.cycles).toBeLessThan(1_000_000);
    expect(other.events).toEqual([]);
  });
});

describe('bench sessions on the emulated board', () => {
  it('list the stuck register bit as divergences, obey halt and step, record a capture and name the likely cause', async () => {
    const rec = recorder('bench-stuck');
    const { job } = await ok('job.start', benchParams({ link: { kind: 'emulator', faults: ['stuck:poured:2:1@40'], seed: 3, baud: 1_000_000 }, record: true }), rec.caller);
    const es = await rec.until(job, (x) => x.some((e) => e.type === 'session-delta' && e.divergences.length > 0));
    const start = es.find((e) => e.type === 'session-start');
    expect(start).toMatchObject({ source: 'emulator', stateNames: ['Idle', 'Prime', 'Pump', 'Finish'] });
    if (start?.type !== 'session-start') throw new Error('no start');
    expect(start.tracks.map((t) => `${t.group}:${t.name}`)).toContain('register:poured');
    expect(start.capture).toMatch(/tank_dosing-\d{8}-\d{6}(-\d+)?\.twcap$/);
    const first = es.flatMap((e) => (e.type === 'session-delta' ? e.divergences : []))[0];
    expect(first).toMatchObject({ signal: 'reg.poured', group: 'register', differingBits: [2], cycle: 40, sample: 40 });
    expect(start.tracks[first.track].name).toBe('poured');
    expect(first.explanation.length).toBeGreaterThan(20);

    expect(await ok('bench.command', { job, command: { kind: 'halt' } }, rec.caller)).toEqual({ sent: 'halt sent' });
    await new Promise((r) => setTimeout(r, 300));
    const halted = frames(rec.of(job));
    await new Promise((r) => setTimeout(r, 300));
    expect(frames(rec.of(job))).toBe(halted);
    await ok('bench.command', { job, command: { kind: 'step', cycles: 5 } }, rec.caller);
    await rec.until(job, (x) => frames(x) === halted + 5);
    await new Promise((r) => setTimeout(r, 200));
    expect(frames(rec.of(job))).toBe(halted + 5);

    await ok('job.cancel', { job }, rec.caller);
    const all = await rec.final(job);
    const end = all.find((e) => e.type === 'session-end');
    if (end?.type !== 'session-end') throw new Error('no session-end');
    expect(end.hints.map((h) => h.cause)).toContain('stuck-bit');
    expect(end.summary).toMatch(/^DIVERGED/);
    expect(existsSync(start.capture!)).toBe(true);

    // The capture replays to the same comparison.
    const list = await ok('capture.list');
    const name = path.basename(start.capture!);
    expect(list.captures.map((c) => c.name)).toContain(name);
    const replay = recorder('replay');
    const r = await ok('job.start', { kind: 'replay', text: demo, source: { kind: 'folder', name } }, replay.caller);
    const res = await replay.final(r.job);
    const rend = res.find((e) => e.type === 'session-end');
    if (rend?.type !== 'session-end') throw new Error('no replay end');
    expect(rend.counters.cycleFrames).toBe(end.counters.cycleFrames);
    expect(rend.counters.divergences).toBe(end.counters.divergences);
    expect(res.some((e) => e.type === 'progress')).toBe(true);
  });

  it('agree with the model when no fault is injected, also with host-driven inputs', async () => {
    for (const hostInputs of [null, { seed: 9 }]) {
      const rec = recorder(`bench-clean-${hostInputs ? 'host' : 'pins'}`);
      const { job } = await ok('job.start', benchParams({ hostInputs }), rec.caller);
      await rec.until(job, (x) => frames(x) > 300);
      await ok('job.cancel', { job }, rec.caller);
      const es = await rec.final(job);
      const end = es.find((e) => e.type === 'session-end');
      expect(end?.type === 'session-end' && end.counters).toMatchObject({ divergences: 0, crcErrors: 0, drops: 0 });
      expect(end?.type === 'session-end' && end.summary).toMatch(/^AGREE/);
    }
  });

  it('count lost frames as drops and keep the axis aligned', async () => {
    const rec = recorder('bench-drop');
    const { job } = await ok('job.start', benchParams({ link: { kind: 'emulator', faults: ['drop:97'], seed: 2, baud: 1_000_000 } }), rec.caller);
    await rec.until(job, (x) => frames(x) > 400);
    await ok('job.cancel', { job }, rec.caller);
    const es = await rec.final(job);
    const end = es.find((e) => e.type === 'session-end');
    if (end?.type !== 'session-end') throw new Error('no end');
    expect(end.counters.crcErrors + end.counters.drops).toBeGreaterThan(0);
    expect(end.counters.samples).toBeGreaterThanOrEqual(end.counters.cycleFrames + end.counters.drops);
  });

  it('fail with the fault named when a fault spec is wrong', async () => {
    const rec = recorder('bench-badfault');
    const { job } = await ok('job.start', benchParams({ link: { kind: 'emulator', faults: ['stuck:volume:2:1'], seed: 1, baud: 115200 } }), rec.caller);
    const es = await rec.final(job);
    const failed = es.find((e) => e.type === 'failed');
    expect(failed?.type === 'failed' && failed.error).toMatch(/fault 'stuck:volume:2:1': 'volume' is not a register/);
  });

  it('stop when their connection goes away', async () => {
    const rec = recorder('bench-dropped-caller');
    const { job } = await ok('job.start', benchParams(), rec.caller);
    await rec.until(job, (x) => frames(x) > 10);
    jobs.dropCaller(rec.caller);
    const es = await rec.final(job);
    expect(es[es.length - 1].type).toBe('cancelled');
  });
});

describe('replay of damaged or foreign files', () => {
  it('replays what is intact in a damaged capture and says where the damage is', async () => {
    const rec = recorder('bench-for-damage');
    const { job } = await ok('job.start', benchParams({ record: true }), rec.caller);
    await rec.until(job, (x) => frames(x) > 200);
    await ok('job.cancel', { job }, rec.caller);
    const es = await rec.final(job);
    const start = es.find((e) => e.type === 'session-start');
    const bytes = new Uint8Array(readFileSync(start?.type === 'session-start' ? start.capture! : ''));
    const damaged = bytes.slice(0, bytes.length - 7);
    const mid = Math.floor(damaged.length * 0.6);
    for (let i = mid; i < mid + 40; i++) damaged[i] ^= 0x5a;
    const replay = recorder('replay-damaged');
    const r = await ok('job.start', { kind: 'replay', text: demo, source: { kind: 'upload', name: 'damaged.twcap', base64: Buffer.from(damaged).toString('base64') } }, replay.caller);
    const res = await replay.final(r.job);
    expect(res[res.length - 1], JSON.stringify(res[res.length - 1])).toMatchObject({ type: 'done' });
    const end = res.find((e) => e.type === 'session-end');
    expect(end?.type === 'session-end' && end.reason).toMatch(/ends inside a record/);
    const log = res.flatMap((e) => (e.type === 'session-delta' ? e.log : []));
    expect(log.some((l) => /capture byte \d+/.test(l.text))).toBe(true);
    expect(end?.type === 'session-end' && end.counters.cycleFrames).toBeGreaterThan(100);
  });

  it('refuses a file that is not a capture, and a capture of another design', async () => {
    const replay = recorder('replay-foreign');
    const r = await ok('job.start', { kind: 'replay', text: demo, source: { kind: 'upload', name: 'notes.txt', base64: Buffer.from('hello, bench').toString('base64') } }, replay.caller);
    const res = await replay.final(r.job);
    const failed = res.find((e) => e.type === 'failed');
    expect(failed?.type === 'failed' && failed.error).toMatch(/capture/);

    const rec = recorder('bench-for-foreign');
    const { job } = await ok('job.start', benchParams({ record: true }), rec.caller);
    await rec.until(job, (x) => frames(x) > 20);
    await ok('job.cancel', { job }, rec.caller);
    const es = await rec.final(job);
    const start = es.find((e) => e.type === 'session-start');
    const name = path.basename(start?.type === 'session-start' ? start.capture! : '');
    const other = recorder('replay-other-design');
    const o = await ok('job.start', { kind: 'replay', text: stamper, source: { kind: 'folder', name } }, other.caller);
    const oes = await other.final(o.job);
    const ofail = oes.find((e) => e.type === 'failed');
    expect(ofail?.type === 'failed' && ofail.error).toMatch(/frame layout .* is not this design's/);
  });

  it('names a capture that is not in the folder', async () => {
    const rec = recorder('replay-missing');
    const r = await ok('job.start', { kind: 'replay', text: demo, source: { kind: 'folder', name: 'nowhere.twcap' } }, rec.caller);
    const es = await rec.final(r.job);
    const failed = es.find((e) => e.type === 'failed');
    expect(failed?.type === 'failed' && failed.error).toMatch(/nowhere\.twcap: cannot read the capture: no such file/);
  });
});

describe('capture.list and bench.ports', () => {
  it('lists only capture files, newest first', async () => {
    writeFileSync(path.join(captureDir, 'notes.txt'), 'not a capture');
    const r = await ok('capture.list');
    expect(r.folder).toBe(captureDir);
    expect(r.captures.every((c) => c.name.endsWith('.twcap'))).toBe(true);
    const times = r.captures.map((c) => c.modified);
    expect([...times].sort().reverse()).toEqual(times);
  });

  it('says why there are no ports when the build has no serial support', async () => {
    const r = await ok('bench.ports');
    expect(r.ports).toEqual([]);
    expect(r.note).toMatch(/emulated board/);
  });
});
