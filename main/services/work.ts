// The app's jobs: a simulation streamed in chunks, a live bench session (emulated board or serial port) and
// the replay of a capture, each pushing progress and results through its JobContext and stopping on cancel.
import { closeSync, existsSync, fstatSync, mkdirSync, openSync, readSync } from 'node:fs';
import path from 'node:path';
import type { Machine } from '../../core/ir/schema';
import { captureHeader, fingerprintNote, layoutMismatch } from '../../core/capture/header';
import type { CaptureHeader } from '../../core/capture/format';
import { CaptureReader } from '../../core/capture/reader';
import { createEmulator } from '../../core/probe/emulator';
import { parseFaultSpec, type Fault } from '../../core/probe/faults';
import { probeLayout, type ProbeLayout } from '../../core/probe/layout';
import { inputVector, type HostCommand } from '../../core/protocol/commands';
import type { BenchCommand, Encoding, JobStartRequest, LinkRequest } from '../../core/services/api';
import { FastSimulation, type FastStimulus } from '../../core/services/fastsim';
import { createSession, type SessionRecorder } from '../../core/services/session';
import { synthesize } from '../../core/synth/index';
import type { Synthesis } from '../../core/synth/schema';
import { CaptureWriter } from '../serial/capture-file';
import { breathe, type JobContext } from './jobs';
import { commandBytes, EmulatorLink, HostStepper, SerialBoardLink, type BoardLink } from './links';
import type { SerialStream } from './serial-adapter';

/** Cycles simulated between two chunks; also how often the job lets cancel calls in. */
const SIM_CHUNK = 50_000;
/** How often a live session pushes what is new. */
const DELTA_MS = 100;
/** Capture bytes read between two progress events of a replay. */
const REPLAY_BLOCK = 1 << 20;

export async function simulateJob(ctx: JobContext, m: Machine, stimulus: FastStimulus, cycles: number): Promise<void> {
  const sim = new FastSimulation(m, stimulus, cycles);
  ctx.emit({ type: 'sim-start', stateNames: sim.stateNames, tracks: sim.meta });
  while (!sim.finished) {
    if (ctx.signal.aborted) return;
    sim.run(SIM_CHUNK);
    ctx.emit({ type: 'sim-chunk', cycles: sim.done, tracks: sim.drain() });
    ctx.emit({ type: 'progress', done: sim.done, total: sim.total, unit: 'cycles', message: `simulated ${sim.done} of ${sim.total} cycles` });
    await breathe();
    await ctx.drained();
  }
  ctx.emit({ type: 'done', message: `simulated ${sim.done} cycles` });
}

export interface Prepared {
  syn: Synthesis;
  layout: ProbeLayout;
}

/** Synthesis and probe layout for a comparison, or a message saying why there can be none. */
export function prepare(m: Machine, encoding: Encoding): Prepared | { error: string } {
  const syn = synthesize(m, { encoding });
  if (!syn.ok) return { error: `synthesis with the ${encoding} encoding failed: ${syn.error}` };
  const laid = probeLayout(m, syn.result);
  if (!laid.ok) return { error: laid.error };
  return { syn: syn.result, layout: laid.layout };
}

export function parseFaults(specs: string[], m: Machine): Fault[] | { error: string } {
  const faults: Fault[] = [];
  for (const s of specs) {
    const r = parseFaultSpec(s, m);
    if (!r.ok) return { error: r.error };
    faults.push(r.fault);
  }
  return faults;
}

/** A capture file name from the machine and the time: sortable, and never an existing file's (-2, -3... when taken). */
export function captureName(m: Machine, at: Date, dir: string): string {
  const stamp = at.toISOString().replace(/[-:]/g, '').replace('T', '-').slice(0, 15);
  for (let k = 1; ; k++) {
    const name = `${m.name}-${stamp}${k > 1 ? `-${k}` : ''}.twcap`;
    if (!existsSync(path.join(dir, name))) return name;
  }
}

export interface BenchEnv {
  captureDir: string;
  openSerial: ((port: string, baud: number) => Promise<SerialStream>) | null;
}

type BenchRequest = Extract<JobStartRequest, { kind: 'bench' }>;

async function openLink(link: LinkRequest, m: Machine, p: Prepared, env: BenchEnv): Promise<BoardLink> {
  if (link.kind === 'emulator') {
    const faults = parseFaults(link.faults, m);
    if ('error' in faults) throw new Error(faults.error);
    const emu = createEmulator({ machine: m, synthesis: p.syn, layout: p.layout, random: { seed: link.seed }, faults });
    if (!emu.ok) throw new Error(emu.error);
    return new EmulatorLink(emu.emulator, link.baud);
  }
  if (!env.openSerial) throw new Error('serial ports are not available in this build; try the emulated board');
  return new SerialBoardLink(link.port, await env.openSerial(link.port, link.baud), inputVector(m.inputs.map((i) => i.type.width)));
}

function hostCommand(cmd: BenchCommand): HostCommand {
  return cmd.kind === 'step' ? { kind: 'step', cycles: cmd.cycles } : { kind: cmd.kind };
}

function describe(cmd: BenchCommand): string {
  return cmd.kind === 'step' ? `step ${cmd.cycles}` : cmd.kind;
}

/** Runs until cancelled or the link closes: bytes in, deltas out every DELTA_MS, capture appended as it comes. */
export async function benchJob(ctx: JobContext, m: Machine, req: BenchRequest, env: BenchEnv): Promise<void> {
  const p = prepare(m, req.encoding);
  if ('error' in p) throw new Error(p.error);
  const made = createSession({ machine: m, synthesis: p.syn, layout: p.layout, waitForDelimiter: req.link.kind === 'serial' });
  if (!made.ok) throw new Error(made.error);
  const session = made.session;
  const link = await openLink(req.link, m, p, env);
  let writer: CaptureWriter | null = null;
  const notes: string[] = [];
  if (req.record) {
    try {
      mkdirSync(env.captureDir, { recursive: true });
    } catch (e) {
      link.close();
      throw new Error(`the capture folder ${env.captureDir} cannot be made: ${(e as Error).message}`);
    }
    const startedAt = new Date();
    const header = captureHeader(m, p.layout, { port: req.link.kind === 'serial' ? req.link.port : 'emulator', baud: req.link.baud, clockHz: m.clockHz }, startedAt, {
      drive: req.hostInputs ? `host-driven random inputs, seed ${req.hostInputs.seed}` : null,
      cycles: null,
    });
    const w = CaptureWriter.create(path.join(env.captureDir, captureName(m, startedAt, env.captureDir)), header);
    if (!w.ok) {
      link.close();
      throw new Error(w.error);
    }
    writer = w.writer;
    if (req.link.kind === 'emulator' && req.link.faults.length) writer.note('emulator', `faults injected: ${req.link.faults.join(', ')}`);
  }
  if (req.link.kind === 'emulator') notes.push(req.link.faults.length ? `emulated board with ${req.link.faults.join(', ')}` : 'emulated board, no faults injected');
  ctx.emit({
    type: 'session-start',
    source: req.link.kind === 'emulator' ? 'emulator' : 'serial',
    title: req.link.kind === 'emulator' ? `emulated board · ${m.name}` : `${req.link.port} · ${m.name}`,
    stateNames: session.stateNames,
    tracks: session.meta,
    compared: session.compared,
    capture: writer?.path ?? null,
    notes,
  });

  const sendCmds = (cmds: HostCommand[]) => {
    const bytes = commandBytes(cmds, link);
    writer?.sentBytes(bytes);
    link.send(bytes);
  };
  const stepper = req.hostInputs ? new HostStepper(m, req.hostInputs.seed, sendCmds) : null;
  ctx.onCommand((cmd) => {
    const frames = session.counters().cycleFrames;
    if (stepper) return stepper.command(hostCommand(cmd), frames);
    sendCmds([hostCommand(cmd)]);
    return `${describe(cmd)} sent`;
  });

  let closed: string | null = null;
  await new Promise<void>((resolve) => {
    let failureNoted = false;
    const timer = setInterval(() => {
      if (writer?.failure && !failureNoted) {
        failureNoted = true;
        session.note(writer.failure);
      }
      ctx.emit({ type: 'session-delta', ...session.drain(performance.now()) });
    }, DELTA_MS);
    const stop = () => {
      clearInterval(timer);
      resolve();
    };
    ctx.signal.addEventListener('abort', stop, { once: true });
    link.start(
      (bytes) => {
        writer?.receivedBytes(bytes);
        try {
          session.push(bytes);
          stepper?.frames(session.counters().cycleFrames);
        } catch (e) {
          // The comparator does not throw on stream content; anything else ends this session, not the app.
          closed = `the comparison stopped: ${e instanceof Error ? e.message : String(e)}`;
          stop();
        }
      },
      (reason) => {
        closed = reason;
        stop();
      },
    );
    stepper?.begin();
  });
  link.close();
  const reason = closed ?? 'disconnected';
  ctx.emit({ type: 'session-delta', ...session.drain(performance.now()) });
  const end = session.finish();
  writer?.close(reason);
  ctx.emit({ type: 'session-end', reason, ...end });
}

type ReplayRequest = Extract<JobStartRequest, { kind: 'replay' }>;

/** A capture's bytes, block by block: from the capture folder or from an upload. */
function captureSource(req: ReplayRequest, captureDir: string): { name: string; size: number; read: (buf: Uint8Array) => number; close: () => void } {
  if (req.source.kind === 'upload') {
    const data = Buffer.from(req.source.base64, 'base64');
    let at = 0;
    return {
      name: req.source.name || 'uploaded capture',
      size: data.length,
      read: (buf) => {
        const n = Math.min(buf.length, data.length - at);
        buf.set(data.subarray(at, at + n));
        at += n;
        return n;
      },
      close: () => {},
    };
  }
  const file = path.join(captureDir, req.source.name);
  let fd: number;
  try {
    fd = openSync(file, 'r');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new Error(`${file}: cannot read the capture: ${code === 'ENOENT' ? 'no such file' : (e as Error).message}`);
  }
  return { name: file, size: fstatSync(fd).size, read: (buf) => readSync(fd, buf, 0, buf.length, null), close: () => closeSync(fd) };
}

export async function replayJob(ctx: JobContext, m: Machine, req: ReplayRequest, captureDir: string): Promise<void> {
  const src = captureSource(req, captureDir);
  let session: SessionRecorder | null = null;
  let fatal: string | null = null;
  const early: string[] = [];
  const reader = new CaptureReader({
    header: (h: CaptureHeader) => {
      const p = prepare(m, h.design.encoding);
      if ('error' in p) return void (fatal = p.error);
      const mismatch = layoutMismatch(h, p.layout);
      if (mismatch) return void (fatal = `${mismatch}; was the board built from another design?`);
      const made = createSession({ machine: m, synthesis: p.syn, layout: p.layout });
      if (!made.ok) return void (fatal = made.error);
      session = made.session;
      const note = fingerprintNote(h, m);
      ctx.emit({
        type: 'session-start',
        source: 'replay',
        title: `replay · ${path.basename(src.name)}`,
        stateNames: session.stateNames,
        tracks: session.meta,
        compared: session.compared,
        capture: src.name,
        notes: [`recorded ${h.startedAt} on ${h.link.port} at ${h.link.baud} baud, ${h.design.encoding} encoding`, ...(note ? [note] : []), ...early],
      });
    },
    record: (r) => {
      if (r.kind === 'received' && session) session.push(r.body);
    },
    problem: (p) => {
      const text = `capture byte ${p.offset}: ${p.message}`;
      const s = session as SessionRecorder | null;
      if (s) s.note(text);
      else if (p.severity === 'error') fatal = text;
      else early.push(text);
    },
  });
  const block = new Uint8Array(REPLAY_BLOCK);
  let done = 0;
  try {
    for (;;) {
      if (ctx.signal.aborted) return;
      const n = src.read(block);
      if (n <= 0) break;
      reader.push(block.subarray(0, n));
      done += n;
      if (fatal) throw new Error(fatal);
      const s = session as SessionRecorder | null;
      if (s) ctx.emit({ type: 'session-delta', ...s.drain(performance.now()) });
      ctx.emit({ type: 'progress', done, total: src.size, unit: 'bytes', message: `replayed ${done} of ${src.size} bytes` });
      await breathe();
      await ctx.drained();
    }
  } finally {
    src.close();
  }
  const summary = reader.end();
  if (fatal) throw new Error(fatal);
  const s = session as SessionRecorder | null;
  if (!s) throw new Error(`${src.name}: no usable capture header`);
  ctx.emit({ type: 'session-delta', ...s.drain(performance.now()) });
  const end = s.finish();
  const reason = summary.truncated ? 'the capture ends inside a record (the recorder was stopped abruptly); everything before it was replayed' : summary.end ? `end of capture (${summary.end.reason})` : 'end of capture';
  ctx.emit({ type: 'session-end', reason, ...end });
  ctx.emit({ type: 'done', message: `replayed ${done} bytes` });
}
