// The board emulator: a TypeScript stand-in for a board running a design with the probe. It sends exactly the
// bytes the Verilog probe would, obeys the same host commands, and can inject faults on the design or the line.
//
// API:
//   const r = createEmulator({ machine, synthesis, layout?, stimulus? | random?, faults?, startHalted? });
//   if (r.ok) { const emu = r.emulator; ... }            (or `new BoardEmulator(opts)`, which throws on bad options)
//   emu.receive(bytes)        host command bytes (any chunking); commands take effect before the next cycle
//   emu.produce(maxBytes, maxCycles?)   runs cycles in lockstep until `maxBytes` line bytes are ready, the
//                             board is halted, the pin stimulus is used up or `maxCycles` cycles have run; returns
//                             at most `maxBytes` bytes (the rest stays queued, like a frame still on the wire).
//                             maxBytes = Infinity means "until halted"; a free-running board then needs maxCycles.
//   emu.cycle                 design cycles since the last reset (the next frame reports this cycle)
//   emu.cyclesRun / emu.finished / emu.halted / emu.hostInputs / emu.stats
//
// Timing model: commands are applied between cycles, in arrival order, which is what the board does for a host
// that waits for each frame (or for a halted board); a board running freely applies them at whichever cycle
// boundary comes first after the command's last byte. The pin stimulus advances one row per cycle run and is
// not rewound by a reset command (pins are wired to the outside world); with `stimulus` it ends with the rows.
// Fault cycles count design cycles since the last reset, as the frames do.
import type { Machine } from '../ir/schema';
import type { Synthesis } from '../synth/schema';
import { compileExpr, compileModel, fromRep, toRep, type CompiledModel, type RepValue } from '../model/compiled';
import { SeededRandom } from '../util/prng';
import { COUNTER_MODULUS, encodeCycleFrame, encodeIdFrame, ID_PERIOD, LAYOUT_VERSION } from '../protocol/frame';
import { CommandDecoder, inputVector, type CommandEvent, type HostCommand, type InputVector } from '../protocol/commands';
import { probeLayout, type ProbeLayout } from './layout';
import { faultProblems, type Fault } from './faults';
import { UartResampler } from './line';

export interface EmulatorOptions {
  machine: Machine;
  synthesis: Synthesis;
  /** The probe layout; derived from machine and synthesis when absent. */
  layout?: ProbeLayout;
  /** Pin values, one row per cycle (machine.inputs order, unsigned bit patterns), as `simulate` takes them. */
  stimulus?: bigint[][];
  /** Random pin values per cycle, the same sequence `randomStimulus(machine, n, seed)` gives. */
  random?: { seed: number };
  faults?: Fault[];
  /** Start halted, waiting for the host (the probe's START_HALTED parameter); default: running. */
  startHalted?: boolean;
}

export interface EmulatorStats {
  cycleFrames: number;
  idFrames: number;
  /** Bytes the probe sent, before line faults. */
  bytesSent: number;
  /** Bytes removed by a drop fault. */
  bytesDropped: number;
  /** Characters received with a low stop bit under a baud fault. */
  framingErrors: number;
  commands: number;
  rejectedCommands: number;
}

export type EmulatorResult = { ok: true; emulator: BoardEmulator } | { ok: false; error: string };

/** Build an emulator, or a message naming what is wrong with the options. */
export function createEmulator(opts: EmulatorOptions): EmulatorResult {
  try {
    return { ok: true, emulator: new BoardEmulator(opts) };
  } catch (e) {
    return { ok: false, error: e instanceof Error ? e.message : String(e) };
  }
}

type StatusFn = (inputs: ArrayLike<RepValue>, regs: ArrayLike<RepValue>) => number[];

/** Status signals as one compiled function (the same expression compiler as the model, so the same values). */
function compileStatus(m: Machine, syn: Synthesis): StatusFn {
  const ii = new Map(m.inputs.map((x, i) => [x.name, i]));
  const ri = new Map(m.registers.map((x, i) => [x.name, i]));
  const names = { input: (n: string) => `inp[${ii.get(n)}]`, reg: (n: string) => `regs[${ri.get(n)}]` };
  const body = `return [${syn.datapath.statusSignals.map((s) => `Number(${compileExpr(s.expr, names)})`).join(', ')}];`;
  // Generated from the checked IR only: signal names never reach the source, they are numbered.
  return new Function('inp', 'regs', body) as StatusFn;
}

export class BoardEmulator {
  readonly machine: Machine;
  readonly layout: ProbeLayout;
  readonly vector: InputVector;
  private readonly model: CompiledModel;
  private readonly status: StatusFn;
  private readonly decoder: CommandDecoder;
  private readonly rows: bigint[][] | null;
  private readonly rng: SeededRandom | null;
  private readonly widths: number[];
  private readonly stuck: { reg: number; mask: bigint; set: bigint; from: number }[];
  private readonly wrong: { state: number; to: number; from: number }[];
  private readonly dropEvery: number;
  private readonly resampler: UartResampler | null;
  private readonly oneBitOutputs: number[];
  private readonly outs: RepValue[];

  private running: boolean;
  private steps = 0;
  private hostMode = false;
  private hostVec: bigint[];
  private counter = 0;
  private afterReset = true;
  private pinRow = 0;
  private total = 0;
  private lineBytes = 0;
  private queue: number[] = [];
  private idleSent = true;
  private readonly counts: EmulatorStats = { cycleFrames: 0, idFrames: 0, bytesSent: 0, bytesDropped: 0, framingErrors: 0, commands: 0, rejectedCommands: 0 };

  constructor(opts: EmulatorOptions) {
    const m = opts?.machine;
    if (!m || !opts.synthesis) throw new Error('board emulator: a machine and its synthesis are needed');
    this.machine = m;
    const layout = opts.layout ?? layoutOrThrow(m, opts.synthesis);
    this.layout = layout;
    this.widths = m.inputs.map((i) => i.type.width);
    this.vector = inputVector(this.widths);
    if (opts.stimulus !== undefined && opts.random !== undefined) throw new Error('board emulator: give either a stimulus or a random seed, not both');
    if (opts.stimulus !== undefined) checkRows(opts.stimulus, this.widths, m);
    if (opts.random !== undefined && !Number.isInteger(opts.random?.seed)) throw new Error('board emulator: the random seed must be an integer');
    const faults = opts.faults ?? [];
    if (!Array.isArray(faults)) throw new Error('board emulator: faults must be a list');
    const problems = faultProblems(faults, m);
    if (problems.length) throw new Error(`board emulator: ${problems.join('; ')}`);
    this.rows = opts.stimulus ?? null;
    this.rng = opts.random ? new SeededRandom(opts.random.seed) : null;
    this.model = compileModel(m);
    this.status = compileStatus(m, opts.synthesis);
    this.decoder = new CommandDecoder(this.vector);
    this.oneBitOutputs = m.outputs.map((o, i) => (o.type.width === 1 ? i : -1)).filter((i) => i >= 0);
    this.outs = new Array(m.outputs.length);
    this.hostVec = m.inputs.map(() => 0n);
    this.running = !opts.startHalted;
    const stateIndex = (name: string) => m.states.findIndex((s) => s.name === name);
    const regIndex = (name: string) => m.registers.findIndex((r) => r.name === name);
    this.stuck = faults.flatMap((f) => (f.kind === 'stuck' ? [{ reg: regIndex(f.register), mask: ~(1n << BigInt(f.bit)), set: BigInt(f.value) << BigInt(f.bit), from: f.from }] : []));
    this.wrong = faults.flatMap((f) => (f.kind === 'transition' ? [{ state: stateIndex(f.state), to: stateIndex(f.to), from: f.from }] : []));
    const drop = faults.filter((f) => f.kind === 'drop');
    this.dropEvery = drop.length ? Math.min(...drop.map((f) => f.every)) : 0;
    const baud = faults.find((f) => f.kind === 'baud');
    this.resampler = baud ? new UartResampler(baud.ratio, baud.seed) : null;
  }

  /** Design cycles since the last reset: the cycle the next frame will report. */
  get cycle(): number {
    return this.counter;
  }

  /** Cycles run since the emulator was made, across resets (the pin stimulus row index). */
  get cyclesRun(): number {
    return this.total;
  }

  /** The pin stimulus is used up and the design reads the pins, so no further cycle can run. */
  get finished(): boolean {
    return !this.hostMode && this.rows !== null && this.pinRow >= this.rows.length;
  }

  /** Neither running freely nor with steps pending. */
  get halted(): boolean {
    return !this.running && this.steps === 0;
  }

  get hostInputs(): boolean {
    return this.hostMode;
  }

  get stats(): Readonly<EmulatorStats> {
    const d = this.decoder.stats;
    return { ...this.counts, framingErrors: this.resampler?.stats.framingErrors ?? 0, commands: d.commands, rejectedCommands: d.rejected };
  }

  /** Host bytes in; returns what the command receiver made of them (commands and rejected segments). */
  receive(bytes: Uint8Array): CommandEvent[] {
    const events = this.decoder.push(bytes);
    for (const e of events) if (e.kind === 'command') this.apply(e.command);
    return events;
  }

  /** Apply one command as the board does (the emulator is always at a frame boundary between cycles). */
  apply(cmd: HostCommand): void {
    switch (cmd.kind) {
      case 'run':
        this.running = true;
        this.steps = 0;
        break;
      case 'halt':
        this.running = false;
        this.steps = 0;
        break;
      case 'step':
        this.running = false;
        this.steps = cmd.cycles;
        break;
      case 'reset':
        this.model.reset();
        this.counter = 0;
        this.afterReset = true;
        break;
      case 'host-inputs':
        this.hostMode = cmd.on;
        break;
      case 'inputs':
        this.hostVec = cmd.values.slice();
        break;
    }
  }

  /**
   * Run cycles until at least `maxBytes` bytes are ready on the line or no cycle can run, and return up to
   * `maxBytes` of them. At most `maxCycles` cycles run in this call.
   */
  produce(maxBytes: number, maxCycles = Infinity): Uint8Array {
    // Infinity asks for everything up to the next halt (or the end of the pin stimulus).
    const want = maxBytes === Infinity ? Infinity : Number.isFinite(maxBytes) && maxBytes > 0 ? Math.floor(maxBytes) : 0;
    if (want === Infinity && maxCycles === Infinity && this.running && (this.rows === null || this.hostMode)) {
      throw new RangeError('board emulator: produce(Infinity) on a free-running board with endless inputs would never return; give maxCycles');
    }
    let ran = 0;
    while (this.queue.length < want && ran < maxCycles && this.canRun()) {
      this.runCycle();
      ran++;
    }
    if (this.queue.length < want && this.resampler && !this.idleSent) {
      // The board stopped sending: the line idles, so the host's receiver completes what it was sampling.
      this.deliver(this.resampler.idle());
      this.idleSent = true;
    }
    const n = Math.min(want, this.queue.length);
    const out = Uint8Array.from(this.queue.slice(0, n));
    this.queue = this.queue.slice(n);
    return out;
  }

  private canRun(): boolean {
    return (this.running || this.steps > 0) && !this.finished;
  }

  private pins(): bigint[] {
    // Past the end of the rows (only possible while host inputs are on) the pins no longer matter.
    if (this.rows) return this.rows[this.pinRow] ?? this.widths.map(() => 0n);
    if (this.rng) {
      const rng = this.rng;
      return this.widths.map((w) => rng.bits(w));
    }
    return this.widths.map(() => 0n);
  }

  /** One design cycle: its frame (after an identification frame where due), then the clock edge. */
  private runCycle(): void {
    const m = this.machine;
    const pins = this.pins();
    const inputs = this.hostMode ? this.hostVec : pins;
    const k = this.counter;
    for (const s of this.stuck) {
      if (k < s.from) continue;
      const regs = this.model.regs();
      const w = m.registers[s.reg].type.width;
      regs[s.reg] = toRep((fromRep(regs[s.reg]) & s.mask) | s.set, w);
      this.model.load(this.model.state(), regs);
    }
    const state = this.model.state();
    const regs = this.model.regs();
    const repInputs = inputs.map((v, i) => toRep(v, this.widths[i]));
    const status = this.status(repInputs, regs);
    this.model.step(repInputs, this.outs);
    for (const t of this.wrong) if (state === t.state && k >= t.from) this.model.load(t.to, this.model.regs());
    const values: bigint[] = [...inputs, BigInt(this.layout.stateCodes[state]), ...regs.map(fromRep), ...status.map((s) => BigInt(s)), ...this.oneBitOutputs.map((o) => fromRep(this.outs[o]))];
    const slot = k % COUNTER_MODULUS;
    if (this.afterReset || slot % ID_PERIOD === 0) {
      this.send(encodeIdFrame({ fingerprint: this.layout.fingerprint, layoutVersion: LAYOUT_VERSION, payloadBits: this.layout.frame.payloadBits, nextCounter: slot, afterReset: this.afterReset }));
      this.counts.idFrames++;
      this.afterReset = false;
    }
    this.send(encodeCycleFrame(this.layout.frame, slot, values));
    this.counts.cycleFrames++;
    this.counter++;
    this.total++;
    this.pinRow++;
    if (!this.running && this.steps > 0) this.steps--;
  }

  private send(bytes: Uint8Array): void {
    this.counts.bytesSent += bytes.length;
    this.idleSent = false;
    if (this.resampler) this.deliver(this.resampler.push(bytes));
    else this.deliver(bytes);
  }

  /** Bytes as the host's receiver hands them over, after the drop fault. */
  private deliver(bytes: ArrayLike<number>): void {
    for (let i = 0; i < bytes.length; i++) {
      this.lineBytes++;
      if (this.dropEvery > 0 && this.lineBytes % this.dropEvery === 0) {
        this.counts.bytesDropped++;
        continue;
      }
      this.queue.push(bytes[i]);
    }
  }
}

function layoutOrThrow(m: Machine, syn: Synthesis): ProbeLayout {
  const r = probeLayout(m, syn);
  if (!r.ok) throw new Error(`board emulator: ${r.error}`);
  return r.layout;
}

function checkRows(rows: unknown, widths: number[], m: Machine): void {
  if (!Array.isArray(rows)) throw new Error('board emulator: the stimulus must be a list of rows');
  rows.forEach((row, k) => {
    if (!Array.isArray(row) || row.length !== widths.length) throw new Error(`board emulator: stimulus row ${k} must have ${widths.length} values (${m.inputs.map((i) => i.name).join(', ')})`);
    row.forEach((v, i) => {
      if (typeof v !== 'bigint' || v < 0n || v >> BigInt(widths[i]) !== 0n) throw new Error(`board emulator: stimulus row ${k}: value ${String(v)} of input '${m.inputs[i].name}' is not a ${widths[i]}-bit pattern`);
    });
  });
}
