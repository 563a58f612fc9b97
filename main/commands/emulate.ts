// `twinstep emulate --design FILE --port PATH --baud N`: a board running the design with its probe, on a
// serial device (one end of a pseudo-terminal pair, for instance), sending frames at the pace of the baud
// and obeying the host's commands; faults can be injected to see how monitor reports them.
import { EXIT, parseOptions, type CliIO, usageFailure } from '../cli-io';
import { loadDesign, loadStimulus } from '../design-file';
import { createEmulator, type BoardEmulator } from '../../core/probe/emulator';
import { FAULT_SYNTAX, formatFault, parseFaultList, type Fault } from '../../core/probe/faults';
import { wireCycleFrameLength } from '../../core/protocol/frame';
import { isEncoding, prepareDesign } from '../serial/session';
import { openSerial, type SerialLink } from '../serial/port';

const USAGE = `usage: twinstep emulate --design FILE.tsm --port PATH --baud N [--stimulus S.csv | --random N [--seed K]]
                       [--fault SPEC[,SPEC...]] [--encoding binary|gray|onehot|custom] [--halted]
faults:
${FAULT_SYNTAX.split('\n').map((l) => `  ${l}`).join('\n')}
`;

const WHO = 'twinstep emulate';
/** Pacing tick: bytes are released every few milliseconds at the rate the baud allows (10 bits per byte, 8N1). */
const TICK_MS = 5;

export async function run(argv: string[], io: CliIO): Promise<number> {
  const opts = parseOptions(argv, { flags: ['help', 'halted'], values: ['design', 'port', 'baud', 'stimulus', 'random', 'seed', 'fault', 'encoding'] });
  if (opts.flags.has('help')) {
    io.out(USAGE);
    return EXIT.ok;
  }
  const problems = [...opts.problems];
  const baud = Number(opts.values.get('baud'));
  const encoding = opts.values.get('encoding') ?? 'binary';
  if (!opts.values.get('design')) problems.push('--design FILE.tsm is required');
  if (!opts.values.get('port')) problems.push('--port PATH is required');
  if (!(Number.isFinite(baud) && baud > 0)) problems.push('--baud needs a positive number');
  if (!isEncoding(encoding)) problems.push(`unknown encoding '${encoding}'`);
  if (opts.positionals.length) problems.push(`unexpected argument '${opts.positionals[0]}'`);
  if (problems.length) return usageFailure(io, WHO, problems, USAGE);
  const m = loadDesign(opts.values.get('design')!, io, { quietWarnings: true });
  if (!m) return EXIT.usage;
  const prepared = prepareDesign(m, encoding as 'binary', io, WHO);
  if (!prepared) return EXIT.usage;
  let faults: Fault[] = [];
  if (opts.values.has('fault')) {
    const f = parseFaultList(opts.values.get('fault')!, m);
    if (!f.ok) {
      io.err(`${WHO}: ${f.error}\n`);
      return EXIT.usage;
    }
    faults = f.faults;
  }
  // --random N: N cycles of the seeded generator (without holding them all); --stimulus: the file's rows.
  let stimulus: bigint[][] | undefined;
  let random: { seed: number } | undefined;
  let cycleLimit = Infinity;
  if (opts.values.has('random')) {
    const n = Number(opts.values.get('random'));
    const seed = Number(opts.values.get('seed') ?? '1');
    if (!Number.isInteger(n) || n < 0 || !Number.isInteger(seed) || opts.values.has('stimulus')) {
      io.err(`${WHO}: --random needs a whole number of cycles and --seed an integer (and no --stimulus)\n`);
      return EXIT.usage;
    }
    random = { seed };
    cycleLimit = n;
  } else if (opts.values.has('stimulus')) {
    const s = loadStimulus(m, opts.values, io);
    if (!s) return EXIT.usage;
    stimulus = s.rows;
  }
  const made = createEmulator({ machine: m, synthesis: prepared.syn, layout: prepared.layout, stimulus, random, faults, startHalted: opts.flags.has('halted') });
  if (!made.ok) {
    io.err(`${WHO}: ${made.error}\n`);
    return EXIT.usage;
  }
  const port = opts.values.get('port')!;
  const opened = await openSerial(port, baud);
  if (!opened.ok) {
    io.err(`${WHO}: ${opened.error}\n`);
    return EXIT.usage;
  }
  const frameBytes = wireCycleFrameLength(prepared.layout.frame);
  io.err(
    `${WHO}: ${m.name} (${encoding}) on ${port} at ${baud} baud: ${frameBytes}-byte frames, about ${Math.floor(baud / 10 / frameBytes)} cycles/s` +
      `${faults.length ? `; faults: ${faults.map(formatFault).join(', ')}` : ''}${opts.flags.has('halted') ? '; halted until the host sends run or step' : ''}\n`,
  );
  return pump(made.emulator, opened.link, baud, cycleLimit, io);
}

/** Release the emulator's bytes at line rate until the stimulus ends, the port goes away or the user stops. */
async function pump(emu: BoardEmulator, link: SerialLink, baud: number, cycleLimit: number, io: CliIO): Promise<number> {
  let lost: string | null = null;
  let stop = false;
  link.onData((bytes) => emu.receive(bytes));
  link.onLost((why) => {
    lost = why;
    stop = true;
  });
  void io.interrupted?.then(() => {
    stop = true;
  });
  const bytesPerMs = baud / 10 / 1000;
  let last = performance.now();
  let budget = 0;
  let doneSince: number | null = null;
  while (!stop) {
    await sleep(TICK_MS);
    const now = performance.now();
    // Never bank more than a few ticks' worth: a stalled host must not get a burst far above line rate.
    budget = Math.min(budget + (now - last) * bytesPerMs, Math.max(64, bytesPerMs * TICK_MS * 4));
    last = now;
    const remaining = cycleLimit - emu.cyclesRun;
    const bytes = emu.produce(Math.floor(budget), remaining > 0 ? remaining : 0);
    if (bytes.length > 0) {
      budget -= bytes.length;
      doneSince = null;
      try {
        await link.write(bytes);
      } catch (e) {
        lost = lost ?? `${link.path}: writing failed: ${(e as Error).message}`;
        break;
      }
      continue;
    }
    const exhausted = emu.finished || emu.cyclesRun >= cycleLimit;
    if (!exhausted) continue;
    // Give the last bytes time to leave before closing.
    doneSince ??= now;
    if (now - doneSince > 200) {
      io.err(`${WHO}: stimulus used up after ${emu.cyclesRun} cycles; stopping\n`);
      break;
    }
  }
  await link.close();
  const s = emu.stats;
  io.err(`${WHO}: ${emu.cyclesRun} cycles, ${s.cycleFrames} cycle frames, ${s.bytesSent} bytes sent, ${s.commands} host commands (${s.rejectedCommands} rejected)\n`);
  if (lost) {
    io.err(`${WHO}: ${lost}\n`);
    return EXIT.errors;
  }
  return EXIT.ok;
}

function sleep(ms: number): Promise<void> {
  return new Promise((resolve) => setTimeout(resolve, ms));
}
