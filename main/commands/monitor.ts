// `twinstep monitor --port PATH --baud N --design FILE`: live lockstep comparison of a board with the model,
// with a status line, optional recording of everything received (a capture `replay` reads back with the
// same verdicts) and optional driving of the design's inputs from a stimulus file, one step per row.
import path from 'node:path';
import { EXIT, parseOptions, type CliIO, usageFailure } from '../cli-io';
import { loadDesign, loadStimulus } from '../design-file';
import { createComparator, type Comparator } from '../../core/compare/comparator';
import { captureHeader } from '../../core/capture/header';
import { encodeCommand, inputVector, type HostCommand } from '../../core/protocol/commands';
import { CaptureWriter } from '../serial/capture-file';
import { openSerial, type SerialLink } from '../serial/port';
import { isEncoding, prepareDesign, VerdictPrinter } from '../serial/session';

const USAGE = `usage: twinstep monitor --port PATH --baud N --design FILE.tsm [--record CAPTURE] [--drive STIM.csv]
                       [--cycles N] [--encoding binary|gray|onehot|custom] [--json] [--no-reset]
                       [--clock-hz N] [--idle-timeout SECONDS] [--limit N]
Exit status: 0 no divergence, 3 divergences, 1 the link was lost or went silent, 2 unusable options or port.
`;

const WHO = 'twinstep monitor';

/** Printed before connecting: the hazards are the board's supply, the adapter's voltage and static. */
export const SAFETY_REMINDER =
  'Before connecting: keep the board within its supply voltage, current limit and polarity; use an adapter whose I/O voltage matches the board\'s (a 5 V adapter can damage 3.3 V pins); take ESD precautions; do not plug or unplug headers while powered; your lab\'s rules and the board maker\'s documentation come first.';

/** How long a driven step may take before the board counts as not answering. */
const STEP_TIMEOUT_MS = 3000;
const STATUS_INTERVAL_MS = 1000;
const SILENCE_NOTE_MS = 5000;

export async function run(argv: string[], io: CliIO): Promise<number> {
  const opts = parseOptions(argv, {
    flags: ['help', 'json', 'no-reset'],
    values: ['port', 'baud', 'design', 'record', 'drive', 'cycles', 'encoding', 'clock-hz', 'idle-timeout', 'limit'],
  });
  if (opts.flags.has('help')) {
    io.out(USAGE);
    return EXIT.ok;
  }
  const problems = [...opts.problems];
  const baud = Number(opts.values.get('baud'));
  const encoding = opts.values.get('encoding') ?? 'binary';
  const cycles = opts.values.has('cycles') ? Number(opts.values.get('cycles')) : null;
  const clockHz = opts.values.has('clock-hz') ? Number(opts.values.get('clock-hz')) : null;
  const idleTimeout = opts.values.has('idle-timeout') ? Number(opts.values.get('idle-timeout')) : null;
  const limit = Number(opts.values.get('limit') ?? 200);
  if (!opts.values.get('port')) problems.push('--port PATH is required (`twinstep ports` lists them)');
  if (!opts.values.get('design')) problems.push('--design FILE.tsm is required (the design the board was built from)');
  if (!(Number.isFinite(baud) && baud > 0)) problems.push('--baud needs a positive number (the probe\'s baud, e.g. 115200)');
  if (!isEncoding(encoding)) problems.push(`unknown encoding '${encoding}' (the encoding the bitstream was built with)`);
  if (cycles !== null && !(Number.isInteger(cycles) && cycles > 0)) problems.push('--cycles needs a positive whole number');
  if (clockHz !== null && !(clockHz > 0)) problems.push('--clock-hz needs a positive number');
  if (idleTimeout !== null && !(idleTimeout > 0)) problems.push('--idle-timeout needs a positive number of seconds');
  if (!Number.isInteger(limit) || limit < 0) problems.push('--limit needs a whole number');
  if (opts.values.has('drive') && opts.flags.has('no-reset')) problems.push('--drive steps the board from reset; it cannot be combined with --no-reset');
  if (opts.positionals.length) problems.push(`unexpected argument '${opts.positionals[0]}'`);
  if (problems.length) return usageFailure(io, WHO, problems, USAGE);
  const m = loadDesign(opts.values.get('design')!, io, { quietWarnings: true });
  if (!m) return EXIT.usage;
  const prepared = prepareDesign(m, encoding as 'binary', io, WHO);
  if (!prepared) return EXIT.usage;
  let drive: bigint[][] | null = null;
  if (opts.values.has('drive')) {
    const s = loadStimulus(m, new Map([['stimulus', opts.values.get('drive')!]]), io);
    if (!s) return EXIT.usage;
    drive = cycles !== null ? s.rows.slice(0, cycles) : s.rows;
  }
  const portPath = opts.values.get('port')!;
  const json = opts.flags.has('json');

  // Live status: rewritten in place on a terminal, a plain line every interval otherwise.
  const tty = Boolean(process.stderr.isTTY);
  let statusShown = false;
  const clearStatus = () => {
    if (statusShown && tty) io.err('\r\x1b[K');
    statusShown = false;
  };
  const printer = new VerdictPrinter(io, json, limit, clearStatus);

  io.err(`${WHO}: ${SAFETY_REMINDER}\n`);

  let writer: CaptureWriter | null = null;
  const recordPath = opts.values.get('record');
  if (recordPath) {
    const header = captureHeader(m, prepared.layout, { port: portPath, baud, clockHz: clockHz ?? m.clockHz }, new Date(), { drive: opts.values.get('drive') ?? null, cycles });
    const w = CaptureWriter.create(path.resolve(io.cwd, recordPath), header);
    if (!w.ok) {
      io.err(`${WHO}: ${w.error}\n`);
      return EXIT.usage;
    }
    writer = w.writer;
  }
  const made = createComparator({ machine: m, synthesis: prepared.syn, layout: prepared.layout, onVerdict: (v) => printer.verdict(v), waitForDelimiter: opts.flags.has('no-reset') });
  if (!made.ok) {
    io.err(`${WHO}: ${made.error}\n`);
    writer?.close('comparator could not be set up');
    return EXIT.usage;
  }
  const comparator = made.comparator;

  const opened = await openSerial(portPath, baud);
  if (!opened.ok) {
    io.err(`${WHO}: ${opened.error}\n`);
    writer?.note('open-failed', opened.error);
    writer?.close('the port could not be opened');
    return EXIT.usage;
  }
  const link = opened.link;
  const session = new Session(link, comparator, writer, m.inputs.map((i) => i.type.width));
  const t0 = performance.now();
  io.err(`${WHO}: comparing ${m.name} (${encoding}) on ${portPath} at ${baud} baud${recordPath ? `, recording to ${recordPath}` : ''}; Ctrl-C stops\n`);

  const statusTimer = setInterval(() => {
    const p = comparator.progress();
    const secs = (performance.now() - t0) / 1000;
    const line = `cycles ${p.lastCycle + 1}  frames/s ${Math.round(p.cycleFrames / Math.max(secs, 1e-3))}  divergences ${p.divergences}  CRC errors ${p.crcErrors}  framing errors ${p.framingErrors}  lost frames ${p.droppedFrames}`;
    if (json) return;
    if (tty) {
      io.err(`\r\x1b[K${line}`);
      statusShown = true;
    } else io.err(`status: ${line}\n`);
    const silent = performance.now() - session.lastData;
    if (silent > SILENCE_NOTE_MS && !session.silenceNoted) {
      session.silenceNoted = true;
      printer.event('link', { message: 'no data' }, `${WHO}: no data from the board for ${Math.round(silent / 1000)} s: check the baud, TX/RX crossing, that the board is powered and programmed`);
      // A board that was halted, or powered after our first commands went out, never heard them: say them again.
      if (p.cycleFrames === 0 && !opts.flags.has('no-reset') && !drive) {
        io.err(`${WHO}: sending reset and run again\n`);
        void session.restart();
      }
    }
  }, STATUS_INTERVAL_MS);

  const reason = await session.run({ reset: !opts.flags.has('no-reset'), drive, cycles, idleTimeoutMs: idleTimeout === null ? null : idleTimeout * 1000, interrupted: io.interrupted });
  clearInterval(statusTimer);
  clearStatus();
  await link.close();
  const summary = comparator.finish();
  writer?.close(reason.text);
  if (reason.kind !== 'done' && reason.kind !== 'user') io.err(`${WHO}: ${reason.text}\n`);
  else io.err(`${WHO}: stopped: ${reason.text}\n`);
  if (writer) {
    if (writer.failure) io.err(`${WHO}: ${writer.failure}\n`);
    io.err(`${WHO}: capture ${recordPath}: ${writer.bytesReceived} bytes received; replay with: twinstep replay ${recordPath} --design ${opts.values.get('design')}\n`);
  }
  if (summary.divergences > 0) return EXIT.divergences;
  return reason.kind === 'lost' || reason.kind === 'silent' ? EXIT.errors : EXIT.ok;
}

type StopReason = { kind: 'done' | 'user' | 'lost' | 'silent'; text: string };

/** One monitoring session: bytes in to comparator and capture, commands out, until a stop condition. */
class Session {
  lastData = performance.now();
  silenceNoted = false;
  private stopWith: ((r: StopReason) => void) | null = null;
  private stopped: StopReason | null = null;
  private readonly vector: ReturnType<typeof inputVector>;

  constructor(
    private readonly link: SerialLink,
    private readonly comparator: Comparator,
    private readonly writer: CaptureWriter | null,
    widths: number[],
  ) {
    this.vector = inputVector(widths);
    link.onData((bytes) => this.received(bytes));
    link.onLost((why) => {
      this.writer?.note('port-lost', why);
      this.stop({ kind: 'lost', text: `${why}; the capture holds everything received before` });
    });
  }

  private cyclesTarget: number | null = null;

  private received(bytes: Uint8Array): void {
    // After a stop nothing more is compared or recorded, so the capture replays to the same verdicts.
    if (this.stopped) return;
    this.lastData = performance.now();
    this.silenceNoted = false;
    this.writer?.receivedBytes(bytes);
    this.comparator.push(bytes);
    const p = this.comparator.progress();
    if (this.cyclesTarget !== null && p.resets > 0 && p.lastCycle + 1 >= this.cyclesTarget) this.stop({ kind: 'done', text: `${this.cyclesTarget} cycles compared` });
  }

  private stop(r: StopReason): void {
    if (this.stopped) return;
    this.stopped = r;
    this.stopWith?.(r);
  }

  /** Reset and run again, for a board that missed the first commands; a failure shows up as a lost link later. */
  async restart(): Promise<void> {
    try {
      await this.send({ kind: 'reset' });
      await this.send({ kind: 'run' });
    } catch {
      // The next write or the idle timer reports the link; nothing to add here.
    }
  }

  private async send(cmd: HostCommand): Promise<void> {
    const wire = encodeCommand(cmd, this.vector);
    this.writer?.sentBytes(wire);
    await this.link.write(wire);
  }

  async run(o: { reset: boolean; drive: bigint[][] | null; cycles: number | null; idleTimeoutMs: number | null; interrupted?: Promise<void> }): Promise<StopReason> {
    const done = new Promise<StopReason>((resolve) => {
      this.stopWith = resolve;
      if (this.stopped) resolve(this.stopped);
    });
    void o.interrupted?.then(() => this.stop({ kind: 'user', text: 'interrupted (Ctrl-C)' }));
    const idle = o.idleTimeoutMs;
    const idleTimer =
      idle === null
        ? null
        : setInterval(() => {
            if (performance.now() - this.lastData > idle) this.stop({ kind: 'silent', text: `no data from the board for ${idle / 1000} s: it stopped sending (halted, held in reset, power, or the cable); stopping` });
          }, Math.min(250, idle));
    try {
      if (o.drive) await this.drive(o.drive);
      else {
        this.cyclesTarget = o.cycles;
        if (o.reset) {
          await this.send({ kind: 'reset' });
          await this.send({ kind: 'run' });
        }
      }
    } catch (e) {
      this.stop({ kind: 'lost', text: `${this.link.path}: sending to the board failed: ${(e as Error).message}` });
    }
    const reason = await done;
    if (idleTimer) clearInterval(idleTimer);
    if (reason.kind === 'done') {
      // Leave the board halted rather than streaming into a closed port.
      await this.send({ kind: 'halt' }).catch(() => undefined);
    }
    return reason;
  }

  /** Host-driven inputs: reset, then for each row set the inputs and step one cycle, waiting for its frame. */
  private async drive(rows: bigint[][]): Promise<void> {
    await this.send({ kind: 'host-inputs', on: true });
    await this.send({ kind: 'halt' });
    await this.send({ kind: 'reset' });
    for (let k = 0; k < rows.length && !this.stopped; k++) {
      await this.send({ kind: 'inputs', values: rows[k] });
      await this.send({ kind: 'step', cycles: 1 });
      const t = performance.now();
      while (!this.stopped && !(this.comparator.progress().resets > 0 && this.comparator.progress().lastCycle >= k)) {
        if (performance.now() - t > STEP_TIMEOUT_MS) {
          this.stop({ kind: 'silent', text: `the board did not answer step ${k} within ${STEP_TIMEOUT_MS / 1000} s (is host-driven input supported by this bitstream?)` });
          return;
        }
        await new Promise((r) => setTimeout(r, 1));
      }
    }
    this.stop({ kind: 'done', text: `drove ${rows.length} cycles from the stimulus` });
  }
}
