// End to end over a real pseudo-terminal pair made by Debian's socat: `twinstep emulate` with an injected
// fault on one end, `twinstep monitor --record` on the other, both as child processes. The fault must be
// reported at the cycle and signal computed here from the plain model trace; `replay` of the capture must
// give the same verdicts; a killed emulator, a vanished port and a killed monitor must all leave a
// readable capture, with a clear message where a process survives to give one.
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { randomStimulus } from '../core/model/stimulus';
import { simulate } from '../core/model/trace';
import { CaptureReader } from '../core/capture/reader';
import { FrameDecoder } from '../core/protocol/decoder';
import { prepared } from './compare-frames';
import { cli } from './support/cli';
import { FIXTURES, loadFixture, ROOT } from './support/load';
import { requireTool, tempDir } from './support/tools';

const DESIGN = path.join(FIXTURES, 'tank_dosing.tsm');
/** A pseudo-terminal has no real line rate; this only sets the emulator's pace (about 8300 frames/s). */
const BAUD = '1000000';

interface Proc {
  child: ChildProcess;
  out: () => string;
  err: () => string;
  exit: Promise<number | null>;
}

const running: ChildProcess[] = [];

afterEach(() => {
  // Stop what this test started, each by its own process id.
  for (const c of running.splice(0)) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
});

function start(cmd: string, args: string[]): Proc {
  const child = spawn(cmd, args, { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
  running.push(child);
  let out = '';
  let err = '';
  child.stdout!.on('data', (b) => (out += b));
  child.stderr!.on('data', (b) => (err += b));
  const exit = new Promise<number | null>((resolve) => child.on('close', (code) => resolve(code)));
  return { child, out: () => out, err: () => err, exit };
}

// One process per command (tsx's own launcher would put the command in a child that a kill would miss).
const twinstep = (args: string[]) => start(process.execPath, ['--import', 'tsx', 'main/cli.ts', ...args]);

async function waitFor(what: string, cond: () => boolean, ms = 30_000): Promise<void> {
  const t = Date.now();
  while (!cond()) {
    if (Date.now() - t > ms) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

/** A connected pair of pseudo-terminals: `board` for the emulator, `host` for the monitor. */
async function ptyPair(dir: string): Promise<{ board: string; host: string; socat: Proc }> {
  requireTool('socat');
  const board = path.join(dir, 'board');
  const host = path.join(dir, 'host');
  const socat = start('socat', [`PTY,link=${board},raw,echo=0`, `PTY,link=${host},raw,echo=0`]);
  await waitFor('socat to create the pseudo-terminals', () => existsSync(board) && existsSync(host), 10_000);
  return { board, host, socat };
}

const jsonLines = (text: string) => text.trim().split('\n').filter(Boolean).map((l) => JSON.parse(l));

function readable(file: string) {
  const problems: string[] = [];
  let received = 0;
  const r = new CaptureReader({ header: () => {}, record: (rec) => (received += rec.kind === 'received' ? rec.body.length : 0), problem: (p) => problems.push(`${p.severity}: ${p.message}`) });
  r.push(readFileSync(file));
  return { summary: r.end(), problems, received };
}

describe('emulate + monitor over a pseudo-terminal pair', () => {
  it('a stuck register bit is reported at the cycle and signal the model trace predicts; replay agrees', async () => {
    const dir = tempDir('e2e');
    const { board, host } = await ptyPair(dir);
    const emu = twinstep(['emulate', '--design', DESIGN, '--port', board, '--baud', BAUD, '--random', '5000', '--seed', '5', '--fault', 'stuck:runs:0:1@40', '--halted']);
    await waitFor('the emulator to start', () => emu.err().includes('halted until the host'));
    const capture = path.join(dir, 'run.tscap');
    const mon = twinstep(['monitor', '--port', host, '--baud', BAUD, '--design', DESIGN, '--record', capture, '--cycles', '1500', '--json']);
    const code = await mon.exit;
    expect(mon.err()).toMatch(/^twinstep monitor: Before connecting: .*supply voltage.*polarity.*I\/O voltage.*ESD.*board maker's documentation/m);
    expect(code).toBe(3);
    // Independent expectation: the board equals the model until the stuck bit first matters, i.e. the first
    // cycle from 40 on in which the model's runs has bit 0 clear (same seeded inputs as the emulator's pins).
    const { machine: m } = loadFixture('tank_dosing');
    const trace = simulate(m, randomStimulus(m, 1500, 5));
    const runs = m.registers.findIndex((r) => r.name === 'runs');
    const first = trace.findIndex((t, k) => k >= 40 && (t.regs[runs] & 1n) === 0n);
    const live = jsonLines(mon.out());
    const ds = live.filter((v) => v.kind === 'divergence');
    expect(ds[0]).toMatchObject({ cycle: first, signal: 'reg.runs', differingBits: [0], actual: String(trace[first].regs[runs] | 1n) });
    const summary = live.find((v) => v.kind === 'summary');
    expect(summary.lastCycle).toBeGreaterThanOrEqual(1499);

    const replay = await cli(['replay', capture, '--design', DESIGN, '--json']);
    expect(replay.code).toBe(3);
    expect(jsonLines(replay.out).filter((v) => v.kind !== 'capture')).toEqual(live);
    expect(jsonLines(replay.out).at(-1)).toMatchObject({ kind: 'capture', truncated: false, end: { reason: '1500 cycles compared' } });
  });

  it('a wrong transition is reported on the state, one cycle after the machine first stands in the faulty state', async () => {
    const dir = tempDir('e2e');
    const { board, host } = await ptyPair(dir);
    const emu = twinstep(['emulate', '--design', DESIGN, '--port', board, '--baud', BAUD, '--random', '5000', '--seed', '9', '--fault', 'transition:Pump->Idle@25', '--halted']);
    // The probe's commands sent before the emulator has the port open would be lost.
    await waitFor('the emulator to start', () => emu.err().includes('halted until the host'));
    const mon = twinstep(['monitor', '--port', host, '--baud', BAUD, '--design', DESIGN, '--cycles', '1000', '--json']);
    expect(await mon.exit).toBe(3);
    const { machine: m } = loadFixture('tank_dosing');
    const trace = simulate(m, randomStimulus(m, 1000, 9));
    const pump = m.states.findIndex((s) => s.name === 'Pump');
    const idle = m.states.findIndex((s) => s.name === 'Idle');
    const c = trace.findIndex((t, k) => k >= 25 && t.state === pump && trace[k + 1].state !== idle);
    const ds = jsonLines(mon.out()).filter((v) => v.kind === 'divergence');
    expect(ds[0]).toMatchObject({ cycle: c + 1, signal: 'state', actual: 'Idle', transition: { from: 'Pump', board: 'Idle', expected: m.states[trace[c + 1].state].name } });
  });

  it('killing the emulator mid-run: the monitor stops on silence with a message and the capture replays', async () => {
    const dir = tempDir('e2e');
    const { board, host } = await ptyPair(dir);
    const emu = twinstep(['emulate', '--design', DESIGN, '--port', board, '--baud', BAUD, '--random', '10000000', '--seed', '2', '--halted']);
    await waitFor('the emulator to start', () => emu.err().includes('halted until the host'));
    const capture = path.join(dir, 'cut.tscap');
    const mon = twinstep(['monitor', '--port', host, '--baud', BAUD, '--design', DESIGN, '--record', capture, '--idle-timeout', '1']);
    await waitFor('some recorded data', () => existsSync(capture) && statSync(capture).size > 20_000);
    emu.child.kill('SIGKILL');
    expect(await mon.exit).toBe(1);
    expect(mon.err()).toMatch(/no data from the board for 1 s: it stopped sending/);
    const cap = readable(capture);
    expect(cap.problems).toEqual([]);
    expect(cap.summary.end?.reason).toMatch(/no data from the board/);
    const replay = await cli(['replay', capture, '--design', DESIGN]);
    expect(replay.code).toBe(0);
    expect(replay.out).toMatch(/^AGREE: \d+ cycle frames/m);
  });

  it('the port vanishing (socat killed, as an unplugged adapter) gives a clear message and a readable capture', async () => {
    const dir = tempDir('e2e');
    const { board, host, socat } = await ptyPair(dir);
    const emu = twinstep(['emulate', '--design', DESIGN, '--port', board, '--baud', BAUD, '--random', '10000000', '--seed', '3', '--halted']);
    // The probe's commands sent before the emulator has the port open would be lost.
    await waitFor('the emulator to start', () => emu.err().includes('halted until the host'));
    const capture = path.join(dir, 'gone.tscap');
    const mon = twinstep(['monitor', '--port', host, '--baud', BAUD, '--design', DESIGN, '--record', capture]);
    await waitFor('some recorded data', () => existsSync(capture) && statSync(capture).size > 20_000);
    socat.child.kill('SIGKILL');
    expect(await mon.exit).toBe(1);
    expect(mon.err()).toMatch(/the port went away \(adapter unplugged, cable pulled, or the other end closed\)/);
    const cap = readable(capture);
    expect(cap.problems).toEqual([]);
    expect(cap.summary.notes.map((n) => n.event)).toContain('port-lost');
    expect((await cli(['replay', capture, '--design', DESIGN])).code).toBe(0);
  });

  it('a killed monitor loses at most the record being written: the capture replays with a note, no error', async () => {
    const dir = tempDir('e2e');
    const { board, host } = await ptyPair(dir);
    const emu = twinstep(['emulate', '--design', DESIGN, '--port', board, '--baud', BAUD, '--random', '10000000', '--seed', '4', '--halted']);
    // The probe's commands sent before the emulator has the port open would be lost.
    await waitFor('the emulator to start', () => emu.err().includes('halted until the host'));
    const capture = path.join(dir, 'killed.tscap');
    const mon = twinstep(['monitor', '--port', host, '--baud', BAUD, '--design', DESIGN, '--record', capture]);
    await waitFor('some recorded data', () => existsSync(capture) && statSync(capture).size > 30_000);
    mon.child.kill('SIGKILL');
    await mon.exit;
    const cap = readable(capture);
    expect(cap.summary.usable).toBe(true);
    expect(cap.summary.end).toBeNull();
    expect(cap.received).toBeGreaterThan(20_000);
    const replay = await cli(['replay', capture, '--design', DESIGN]);
    expect(replay.code).toBe(0);
    expect(replay.err).toMatch(/no end record/);
  });

  it('Ctrl-C stops the monitor cleanly and keeps the capture', async () => {
    const dir = tempDir('e2e');
    const { board, host } = await ptyPair(dir);
    const emu = twinstep(['emulate', '--design', DESIGN, '--port', board, '--baud', BAUD, '--random', '10000000', '--seed', '6', '--halted']);
    // The probe's commands sent before the emulator has the port open would be lost.
    await waitFor('the emulator to start', () => emu.err().includes('halted until the host'));
    const capture = path.join(dir, 'int.tscap');
    const mon = twinstep(['monitor', '--port', host, '--baud', BAUD, '--design', DESIGN, '--record', capture]);
    await waitFor('some recorded data', () => existsSync(capture) && statSync(capture).size > 20_000);
    mon.child.kill('SIGINT');
    expect(await mon.exit).toBe(0);
    expect(mon.err()).toMatch(/stopped: interrupted \(Ctrl-C\)/);
    expect(mon.out()).toMatch(/^AGREE: /m);
    expect(readable(capture).summary.end?.reason).toBe('interrupted (Ctrl-C)');
  });
});

describe('monitor --drive', () => {
  it('steps the board with the stimulus rows as host inputs: the frames carry exactly those inputs, no divergence', async () => {
    const dir = tempDir('e2e');
    const { board, host } = await ptyPair(dir);
    // The pins get other values (a seeded generator): the board must use the host's vector instead.
    const emu = twinstep(['emulate', '--design', DESIGN, '--port', board, '--baud', BAUD, '--random', '100000', '--seed', '8', '--halted']);
    // The probe's commands sent before the emulator has the port open would be lost.
    await waitFor('the emulator to start', () => emu.err().includes('halted until the host'));
    const capture = path.join(dir, 'drive.tscap');
    const stim = path.join(FIXTURES, 'tank_dosing.csv');
    const mon = twinstep(['monitor', '--port', host, '--baud', BAUD, '--design', DESIGN, '--record', capture, '--drive', stim, '--json']);
    expect(await mon.exit).toBe(0);
    const { machine: m, rows } = loadFixture('tank_dosing');
    const summary = jsonLines(mon.out()).find((v) => v.kind === 'summary');
    expect(summary).toMatchObject({ outcome: 'agree', cycleFrames: rows.length, lastCycle: rows.length - 1 });
    // Decode the recorded stream with the protocol's own decoder and compare the inputs with the CSV.
    const d = prepared(m, rows);
    const decoder = new FrameDecoder(d.layout.frame);
    const seen: bigint[][] = [];
    const r = new CaptureReader({ header: () => {}, problem: () => {}, record: (rec) => {
      if (rec.kind !== 'received') return;
      for (const e of decoder.push(rec.body)) if (e.kind === 'cycle') seen.push(m.inputs.map((x) => e.values[d.layout.fields.findIndex((f) => f.kind === 'input' && f.source === x.name)]));
    } });
    r.push(readFileSync(capture));
    r.end();
    expect(seen).toEqual(rows);
  });
});

describe('serial commands on bad input', () => {
  it('monitor: a missing port and an existing capture file are refused with exit 2 and a message', async () => {
    const dir = tempDir('e2e');
    const r = await cli(['monitor', '--port', path.join(dir, 'nope'), '--baud', '115200', '--design', DESIGN]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/no such serial port/);
    const existing = path.join(dir, 'old.tscap');
    writeFileSync(existing, 'precious');
    const r2 = await cli(['monitor', '--port', path.join(dir, 'nope'), '--baud', '115200', '--design', DESIGN, '--record', existing]);
    expect(r2.code).toBe(2);
    expect(r2.err).toMatch(/the file exists \(a capture is never overwritten/);
    expect(readFileSync(existing, 'utf8')).toBe('precious');
  });

  it('emulate: a bad fault spec is refused with the spec named', async () => {
    const r = await cli(['emulate', '--design', DESIGN, '--port', '/dev/null', '--baud', '115200', '--fault', 'stuck:nosuch:1:1']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/fault 'stuck:nosuch:1:1': 'nosuch' is not a register of tank_dosing/);
  });
});
