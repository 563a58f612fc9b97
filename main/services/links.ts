// Board links for bench sessions: the emulated board (BoardEmulator in this process, paced like an 8N1 line at
// the chosen baud) and, through main/serial, a real port; plus the host-driven input stepper both can use.
import type { Machine } from '../../core/ir/schema';
import type { BoardEmulator } from '../../core/probe/emulator';
import { encodeCommands, type HostCommand, type InputVector } from '../../core/protocol/commands';
import { SeededRandom } from '../../core/util/prng';
import type { SerialStream } from './serial-adapter';

export interface BoardLink {
  /** What the capture header records as the port. */
  readonly name: string;
  readonly vector: InputVector;
  start(onData: (bytes: Uint8Array) => void, onClose: (reason: string) => void): void;
  send(bytes: Uint8Array): void;
  close(): void;
}

/** Tick of the emulator's pacing timer; bytes per tick follow from the baud. */
const EMULATOR_TICK_MS = 20;
/** Most bytes one tick may deliver, so a long stall (a busy event loop) does not turn into a flood. */
const MAX_TICK_BYTES = 64 * 1024;
/** Chunk handed to the host at a time, about what a serial driver delivers per read. */
const CHUNK_BYTES = 512;

/** The emulated board: bytes leave at baud / 10 per second, as they would on the wire. */
export class EmulatorLink implements BoardLink {
  readonly name = 'emulator';
  readonly vector: InputVector;
  private timer: ReturnType<typeof setInterval> | null = null;
  private last = 0;
  private credit = 0;

  constructor(
    private readonly emu: BoardEmulator,
    private readonly baud: number,
  ) {
    this.vector = emu.vector;
  }

  start(onData: (bytes: Uint8Array) => void, onClose: (reason: string) => void): void {
    this.last = performance.now();
    this.timer = setInterval(() => {
      try {
        this.tick(onData);
      } catch (e) {
        // A fault here must end this session, not the whole app.
        this.close();
        onClose(`the emulated board stopped: ${e instanceof Error ? e.message : String(e)}`);
      }
    }, EMULATOR_TICK_MS);
  }

  private tick(onData: (bytes: Uint8Array) => void): void {
    const now = performance.now();
    this.credit = Math.min(MAX_TICK_BYTES, this.credit + ((now - this.last) / 1000) * (this.baud / 10));
    this.last = now;
    // Hand bytes over in small chunks: a host-driven stepper answers each frame before the next is made.
    while (this.credit >= 1) {
      const bytes = this.emu.produce(Math.min(CHUNK_BYTES, Math.floor(this.credit)));
      if (bytes.length === 0) break;
      this.credit -= bytes.length;
      onData(bytes);
    }
    // An idle board does not save up line time.
    if (this.emu.halted) this.credit = Math.min(this.credit, CHUNK_BYTES);
  }

  send(bytes: Uint8Array): void {
    this.emu.receive(bytes);
  }

  close(): void {
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
  }
}

/** A real board on a serial port; the port's own loss (unplugged adapter) ends the session with its reason. */
export class SerialBoardLink implements BoardLink {
  private lost: string | null = null;

  constructor(
    readonly name: string,
    private readonly port: SerialStream,
    readonly vector: InputVector,
  ) {}

  start(onData: (bytes: Uint8Array) => void, onClose: (reason: string) => void): void {
    this.port.onData(onData);
    this.port.onLost((why) => {
      this.lost = why;
      onClose(why);
    });
  }

  send(bytes: Uint8Array): void {
    // A failed write means the port is gone; onLost reports that, so the rejection needs no second report.
    this.port.write(bytes).catch(() => {});
  }

  close(): void {
    if (!this.lost) void this.port.close().catch(() => {});
  }
}

/** Waits this long for the frame of a step before asking again (the frame or the command may be lost). */
const STEP_RETRY_MS = 500;

/**
 * Host-driven inputs: the host switches the board to its own input vector and steps one cycle at a time,
 * each with fresh seeded random values, waiting for that cycle's frame before the next step.
 */
export class HostStepper {
  private readonly rng: SeededRandom;
  private readonly widths: number[];
  private outstanding = false;
  private framesAtStep = 0;
  private sentAt = 0;
  private paused = false;
  private remaining = Infinity;

  constructor(
    m: Machine,
    seed: number,
    private readonly send: (cmds: HostCommand[]) => void,
  ) {
    this.rng = new SeededRandom(seed);
    this.widths = m.inputs.map((i) => i.type.width);
  }

  begin(): void {
    this.send([{ kind: 'halt' }, { kind: 'host-inputs', on: true }]);
    this.step(0);
  }

  private step(frames: number): void {
    if (this.paused || this.remaining <= 0) return;
    if (this.remaining !== Infinity) this.remaining--;
    this.send([{ kind: 'inputs', values: this.widths.map((w) => this.rng.bits(w)) }, { kind: 'step', cycles: 1 }]);
    this.outstanding = true;
    this.framesAtStep = frames;
    this.sentAt = performance.now();
  }

  /** Cycle frames received so far; steps again once the outstanding step's frame is in. */
  frames(count: number): void {
    if (this.outstanding && count > this.framesAtStep) {
      this.outstanding = false;
      this.step(count);
    } else if (this.outstanding && performance.now() - this.sentAt > STEP_RETRY_MS) {
      this.send([{ kind: 'step', cycles: 1 }]);
      this.sentAt = performance.now();
    } else if (!this.outstanding && !this.paused && this.remaining > 0) this.step(count);
  }

  /** Board commands from the user, in the stepper's terms. */
  command(cmd: HostCommand, frames: number): string {
    switch (cmd.kind) {
      case 'halt':
        this.paused = true;
        return 'halted (host-driven inputs paused)';
      case 'run':
        this.paused = false;
        this.remaining = Infinity;
        if (!this.outstanding) this.step(frames);
        return 'running (host-driven inputs)';
      case 'step':
        this.paused = false;
        this.remaining = cmd.cycles;
        if (!this.outstanding) this.step(frames);
        return `stepping ${cmd.cycles} cycle${cmd.cycles === 1 ? '' : 's'} with host inputs`;
      default:
        this.send([cmd]);
        return 'reset sent';
    }
  }
}

/** Host commands as line bytes for a link. */
export function commandBytes(cmds: HostCommand[], link: { vector: InputVector }): Uint8Array {
  return encodeCommands(cmds, link.vector);
}
