// A bench session over a real serial port: socat makes a pseudo-terminal pair, the emulated board (with a
// stuck register bit) talks on one end, the app's session opens the other through main/serial. Needs socat:
// the test fails, it does not skip, when socat is missing.
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { createReadStream, existsSync, mkdtempSync, openSync, readFileSync, rmSync, writeSync, type ReadStream } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checkDesign } from '../core/check/checker';
import { createEmulator, type BoardEmulator } from '../core/probe/emulator';
import { parseFaultSpec } from '../core/probe/faults';
import { JobEventSchema, type JobEvent } from '../core/services/api';
import { synthesize } from '../core/synth/index';
import { createHandlers, dispatch } from '../main/services/handlers';
import { JobManager } from '../main/services/jobs';
import { loadSerial } from '../main/services/serial-adapter';

const dir = mkdtempSync(path.join(os.tmpdir(), 'twinstep-serial-'));
const boardEnd = path.join(dir, 'board');
const hostEnd = path.join(dir, 'host');
const demo = readFileSync(path.join(__dirname, '..', 'fixtures', 'tank_dosing.tsm'), 'utf8');
let socat: ChildProcess;
let emu: BoardEmulator;
let boardFd = -1;
let commands: ReadStream;
let pump: ReturnType<typeof setInterval>;

beforeAll(async () => {
  const which = spawnSync('sh', ['-c', 'command -v socat']);
  expect(which.status, 'socat is missing: apt-get install socat').toBe(0);
  socat = spawn('socat', [`pty,raw,echo=0,link=${boardEnd}`, `pty,raw,echo=0,link=${hostEnd}`], { stdio: 'ignore' });
  for (let t = 0; !(existsSync(boardEnd) && existsSync(hostEnd)); t += 50) {
    if (t > 5000) throw new Error('socat did not make the pseudo-terminal pair');
    await new Promise((r) => setTimeout(r, 50));
  }
  const m = checkDesign(demo).machine!;
  const syn = synthesize(m, { encoding: 'binary' });
  if (!syn.ok) throw new Error(syn.error);
  const fault = parseFaultSpec('stuck:poured:2:1@40', m);
  if (!fault.ok) throw new Error(fault.error);
  const made = createEmulator({ machine: m, synthesis: syn.result, random: { seed: 3 }, faults: [fault.fault] });
  if (!made.ok) throw new Error(made.error);
  emu = made.emulator;
  // The board end: frames out at about 115200 baud, host commands in.
  boardFd = openSync(boardEnd, 'r+');
  // The stream owns the descriptor and closes it when destroyed.
  commands = createReadStream('', { fd: boardFd, autoClose: true });
  commands.on('error', () => {});
  commands.on('data', (b) => emu.receive(new Uint8Array(b as Buffer)));
  pump = setInterval(() => {
    const bytes = emu.produce(230);
    if (bytes.length) writeSync(boardFd, bytes);
  }, 20);
});

afterAll(() => {
  clearInterval(pump);
  commands?.destroy();
  socat?.kill();
  rmSync(dir, { recursive: true, force: true });
});

describe('a bench session on a serial port', () => {
  it('lists the port, compares its frames, sends board commands to it and closes it on disconnect', async () => {
    const serial = await loadSerial();
    expect(serial, 'main/serial could not be loaded').not.toBeNull();
    const jobs = new JobManager();
    const handlers = createHandlers({ shell: 'serve', version: 'test', demoDir: dir, captureDir: dir, jobs, serial });
    const events: JobEvent[] = [];
    const caller = { id: 'serial-test', emit: (e: JobEvent) => events.push(JobEventSchema.parse(e)) };
    const ports = await dispatch(handlers, { method: 'bench.ports' });
    expect(ports.ok).toBe(true);

    const started = await dispatch(
      handlers,
      { method: 'job.start', params: { kind: 'bench', text: demo, encoding: 'binary', link: { kind: 'serial', port: hostEnd, baud: 115200 }, record: false, hostInputs: null, safetyAcknowledged: true } },
      caller,
    );
    if (!started.ok) throw new Error(started.error.message);
    const job = (started.value as { job: number }).job;
    const divergences = () => events.flatMap((e) => (e.type === 'session-delta' ? e.divergences : []));
    await expect.poll(() => divergences().length, { timeout: 15_000 }).toBeGreaterThan(2);
    expect(divergences()[0]).toMatchObject({ signal: 'reg.poured', differingBits: [2] });
    expect(events.find((e) => e.type === 'session-start')).toMatchObject({ source: 'serial', title: expect.stringContaining(hostEnd) });

    const halt = await dispatch(handlers, { method: 'bench.command', params: { job, command: { kind: 'halt' } } }, caller);
    expect(halt).toEqual({ ok: true, value: { sent: 'halt sent' } });
    await expect.poll(() => emu.halted, { timeout: 5000 }).toBe(true);

    await dispatch(handlers, { method: 'job.cancel', params: { job } }, caller);
    await expect.poll(() => events.some((e) => e.type === 'cancelled'), { timeout: 5000 }).toBe(true);
    const end = events.find((e) => e.type === 'session-end');
    expect(end?.type === 'session-end' && end.hints.map((h) => h.cause)).toContain('stuck-bit');
    expect(jobs.active).toBe(0);
  });

  it('names a port that does not exist', async () => {
    const serial = await loadSerial();
    const handlers = createHandlers({ shell: 'serve', version: 'test', demoDir: dir, captureDir: dir, serial });
    const events: JobEvent[] = [];
    const caller = { id: 'serial-missing', emit: (e: JobEvent) => events.push(e) };
    const missing = path.join(dir, 'no-such-port');
    await dispatch(handlers, { method: 'job.start', params: { kind: 'bench', text: demo, encoding: 'binary', link: { kind: 'serial', port: missing, baud: 115200 }, record: false, hostInputs: null, safetyAcknowledged: true } }, caller);
    await expect.poll(() => events.some((e) => e.type === 'failed'), { timeout: 5000 }).toBe(true);
    const failed = events.find((e) => e.type === 'failed');
    expect(failed?.type === 'failed' && failed.error).toMatch(/no such serial port/);
  });
});
