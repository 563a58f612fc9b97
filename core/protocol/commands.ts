// Host-to-board commands of the probe: run, halt, step N, reset, host-driven inputs on/off and the input vector.
// Framed like the uplink (CRC-16 + COBS + 0x00), but with the reflected form of the frames' CRC, which the board
// folds in bit by bit as its UART receives them; the decoder accepts exactly what the board's receiver accepts.
import { cobsDecodeInto, cobsEncode, cobsErrorText } from './cobs';
import { MAX_FRAME_BYTES, MAX_WIRE_SEGMENT, packFields, unpackFields, type FrameField, type FrameLayout, makeLayout } from './frame';

/**
 * The check word of a command: CRC-16/MCRF4XX from the CRC catalogue. It is CRC-16/IBM-3740 (the frames' CRC,
 * ./crc.ts) with input and output reflected, i.e. each byte taken least significant bit first, the order in
 * which a UART carries it. It is appended low byte first; a command followed by its own CRC leaves 0x0000.
 */
export const COMMAND_CRC_PARAMS = {
  name: 'CRC-16/MCRF4XX',
  width: 16,
  poly: 0x1021,
  init: 0xffff,
  refin: true,
  refout: true,
  xorout: 0x0000,
  residue: 0x0000,
} as const;

/** 0x1021 with its 16 bits in reverse order: the polynomial of the right-shifting (reflected) register. */
const POLY_REVERSED = 0x8408;

/** One table entry per value of the register's low byte XOR the incoming byte. */
const COMMAND_CRC_TABLE = (() => {
  const table = new Uint16Array(256);
  for (let i = 0; i < 256; i++) {
    let r = i;
    for (let bit = 0; bit < 8; bit++) r = r & 1 ? (r >>> 1) ^ POLY_REVERSED : r >>> 1;
    table[i] = r;
  }
  return table;
})();

/** CRC-16/MCRF4XX of bytes[start, end). */
export function commandCrc(bytes: Uint8Array, start = 0, end = bytes.length): number {
  let r: number = COMMAND_CRC_PARAMS.init;
  for (let i = start; i < end; i++) r = (r >>> 8) ^ COMMAND_CRC_TABLE[(r ^ bytes[i]) & 0xff];
  return r ^ COMMAND_CRC_PARAMS.xorout;
}

/**
 * A command as the host means it.
 * - `run`: free-running lockstep (a cycle whenever the previous frame has been handed to the transmitter).
 * - `halt`: stop after the cycle in progress; pending steps are dropped.
 * - `step`: halt, then run exactly `cycles` more cycles (0..65535; replaces any pending count, 0 = halt).
 * - `reset`: reset the design at the next frame boundary; the cycle counter restarts at 0. Mode, pending
 *   steps and the host input vector are kept.
 * - `host-inputs`: `on` makes the design see the host's input vector instead of the board pins.
 * - `inputs`: the host input vector, one bit pattern per design input in declaration order; it is used from the
 *   next cycle that starts after the command arrives, for as long as host inputs are on, until replaced.
 */
export type HostCommand =
  | { kind: 'run' }
  | { kind: 'halt' }
  | { kind: 'step'; cycles: number }
  | { kind: 'reset' }
  | { kind: 'host-inputs'; on: boolean }
  | { kind: 'inputs'; values: bigint[] };

/** First byte of a raw command frame. Values of our own choosing; 0x00 and 0x08-0xFF are unused. */
export const COMMAND_OPCODE = {
  run: 0x01,
  halt: 0x02,
  step: 0x03,
  reset: 0x04,
  hostInputsOn: 0x05,
  hostInputsOff: 0x06,
  inputs: 0x07,
} as const;

/** Largest step count: the argument is 16 bits. */
export const MAX_STEP_CYCLES = 0xffff;

/**
 * Every command has the same raw length for a given design: opcode, argument bytes, CRC. The argument bytes
 * have room for the larger of the input vector and the 16-bit step count; a command uses what it needs from
 * the start and sends the rest as 0 (the board does not read it). One length for all lets the board check it
 * against a constant.
 */
export function commandArgumentBytes(vectorBytes: number): number {
  return Math.max(2, vectorBytes);
}

/** Raw length of every command for a design whose input vector takes at most 2 bytes (up to 16 input bits). */
export const PLAIN_COMMAND_BYTES = 5;
export const STEP_COMMAND_BYTES = 5;

/** The design's input vector as the `inputs` command packs it: the same LSB-first packing as a frame payload. */
export type InputVector = {
  widths: readonly number[];
  /** Bytes the vector takes (0 for a design without inputs). */
  bytes: number;
  /** Null for a design without inputs. */
  layout: FrameLayout | null;
};

export function inputVector(widths: readonly number[]): InputVector {
  if (widths.length === 0) return { widths: [], bytes: 0, layout: null };
  const fields: FrameField[] = widths.map((width, i) => ({ name: `in${i}`, width }));
  const layout = makeLayout(fields);
  return { widths: widths.slice(), bytes: layout.payloadBytes, layout };
}

/** Raw length of the `inputs` command (and so of every command) for a design whose inputs take `vectorBytes` bytes. */
export function inputsCommandBytes(vectorBytes: number): number {
  return 1 + commandArgumentBytes(vectorBytes) + 2;
}

export type CommandEncodeResult = { ok: true; wire: Uint8Array } | { ok: false; error: string };

/**
 * Opcode and argument bytes (no CRC), the arguments zero-filled to `commandArgumentBytes`; throws RangeError
 * naming the problem for a command that cannot be sent.
 */
function commandBody(cmd: HostCommand, vector: InputVector): Uint8Array {
  const body = new Uint8Array(1 + commandArgumentBytes(vector.bytes));
  switch (cmd.kind) {
    case 'run':
      body[0] = COMMAND_OPCODE.run;
      return body;
    case 'halt':
      body[0] = COMMAND_OPCODE.halt;
      return body;
    case 'reset':
      body[0] = COMMAND_OPCODE.reset;
      return body;
    case 'host-inputs':
      body[0] = cmd.on ? COMMAND_OPCODE.hostInputsOn : COMMAND_OPCODE.hostInputsOff;
      return body;
    case 'step': {
      const n = cmd.cycles;
      if (!Number.isInteger(n) || n < 0 || n > MAX_STEP_CYCLES) throw new RangeError(`step command: the cycle count must be an integer from 0 to ${MAX_STEP_CYCLES} (got ${String(n)})`);
      body.set([COMMAND_OPCODE.step, n & 0xff, n >>> 8]);
      return body;
    }
    case 'inputs': {
      if (!Array.isArray(cmd.values) || cmd.values.length !== vector.widths.length) {
        throw new RangeError(`inputs command: the design has ${vector.widths.length} inputs but ${Array.isArray(cmd.values) ? cmd.values.length : 'no list of'} values were given`);
      }
      body[0] = COMMAND_OPCODE.inputs;
      if (vector.layout) {
        cmd.values.forEach((v, i) => {
          const w = vector.widths[i];
          if (typeof v !== 'bigint' || v < 0n || v >> BigInt(w) !== 0n) throw new RangeError(`inputs command: value ${String(v)} of input ${i} is not a ${w}-bit pattern`);
        });
        body.set(packFields(vector.layout, cmd.values), 1);
      }
      return body;
    }
    default:
      throw new RangeError(`unknown command kind '${String((cmd as { kind?: unknown }).kind)}'`);
  }
}

/** Opcode, arguments and CRC-16/MCRF4XX (low byte first), before stuffing. */
export function rawCommand(cmd: HostCommand, vector: InputVector): Uint8Array {
  const body = commandBody(cmd, vector);
  const raw = new Uint8Array(body.length + 2);
  raw.set(body);
  const crc = commandCrc(body);
  raw[body.length] = crc & 0xff;
  raw[body.length + 1] = crc >>> 8;
  return raw;
}

/**
 * Wire bytes: a leading 0x00, the COBS-stuffed raw command, the 0x00 delimiter. The leading delimiter makes the
 * board drop whatever it had half-received (noise, a frame cut off when the port was opened), so every
 * command stands on its own.
 */
export function encodeCommand(cmd: HostCommand, vector: InputVector): Uint8Array {
  const stuffed = cobsEncode(rawCommand(cmd, vector));
  const wire = new Uint8Array(stuffed.length + 2);
  wire.set(stuffed, 1);
  return wire;
}

/** `encodeCommand` without throwing: a clear message for a command that cannot be sent. */
export function tryEncodeCommand(cmd: HostCommand, vector: InputVector): CommandEncodeResult {
  try {
    return { ok: true, wire: encodeCommand(cmd, vector) };
  } catch (e) {
    return { ok: false, error: e instanceof Error ? e.message : String(e) };
  }
}

/** Several commands back to back. */
export function encodeCommands(cmds: readonly HostCommand[], vector: InputVector): Uint8Array {
  const parts = cmds.map((c) => encodeCommand(c, vector));
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

export type CommandEvent =
  | { kind: 'command'; command: HostCommand; offset: number }
  /** A segment between delimiters the board would ignore, and why. */
  | { kind: 'error'; message: string; offset: number };

export type CommandDecoderStats = { bytes: number; commands: number; rejected: number };

/** Raw length a command with this opcode must have (the same for all), or null for an opcode the board does not know. */
export function expectedCommandLength(opcode: number, vector: InputVector): number | null {
  return Number.isInteger(opcode) && opcode >= COMMAND_OPCODE.run && opcode <= COMMAND_OPCODE.inputs ? inputsCommandBytes(vector.bytes) : null;
}

/**
 * The board's command receiver in TypeScript: bytes in any chunking, commands out. A segment between two
 * 0x00 bytes is obeyed only if it is valid COBS, has a known opcode and the command length, and leaves a CRC
 * residue of 0; anything else is reported and ignored. Argument bytes a command does not use are not looked at,
 * as on the board. Empty segments (repeated 0x00) are idle filler. Never throws.
 */
export class CommandDecoder {
  private readonly segment = new Uint8Array(MAX_WIRE_SEGMENT);
  private readonly raw = new Uint8Array(MAX_FRAME_BYTES);
  private length = 0;
  private overlong = false;
  private start = 0;
  private readonly counts: CommandDecoderStats = { bytes: 0, commands: 0, rejected: 0 };

  constructor(private readonly vector: InputVector) {}

  get stats(): Readonly<CommandDecoderStats> {
    return { ...this.counts };
  }

  push(chunk: Uint8Array): CommandEvent[] {
    const events: CommandEvent[] = [];
    if (!(chunk instanceof Uint8Array)) return events;
    const base = this.counts.bytes;
    for (let i = 0; i < chunk.length; i++) {
      const b = chunk[i];
      if (b !== 0) {
        if (this.length === 0 && !this.overlong) this.start = base + i;
        if (this.length < MAX_WIRE_SEGMENT) this.segment[this.length++] = b;
        else this.overlong = true;
        continue;
      }
      if (this.overlong) this.reject(events, `no delimiter within ${MAX_WIRE_SEGMENT} bytes`);
      else if (this.length > 0) this.decode(events);
      this.length = 0;
      this.overlong = false;
    }
    this.counts.bytes += chunk.length;
    return events;
  }

  private decode(events: CommandEvent[]): void {
    const n = cobsDecodeInto(this.segment, this.length, this.raw);
    if (n < 0) return this.reject(events, cobsErrorText(n));
    const opcode = this.raw[0];
    const expected = expectedCommandLength(opcode, this.vector);
    if (expected === null) return this.reject(events, `unknown opcode 0x${opcode.toString(16).padStart(2, '0')}`);
    if (n !== expected) return this.reject(events, `opcode 0x${opcode.toString(16).padStart(2, '0')} needs ${expected} bytes, got ${n}`);
    // Running the CRC over the command and its own check word leaves 0 (the residue of CRC-16/MCRF4XX).
    if (commandCrc(this.raw, 0, n) !== COMMAND_CRC_PARAMS.residue) return this.reject(events, 'CRC mismatch');
    this.counts.commands++;
    events.push({ kind: 'command', command: this.command(opcode), offset: this.start });
  }

  private command(opcode: number): HostCommand {
    const r = this.raw;
    switch (opcode) {
      case COMMAND_OPCODE.run:
        return { kind: 'run' };
      case COMMAND_OPCODE.halt:
        return { kind: 'halt' };
      case COMMAND_OPCODE.reset:
        return { kind: 'reset' };
      case COMMAND_OPCODE.hostInputsOn:
        return { kind: 'host-inputs', on: true };
      case COMMAND_OPCODE.hostInputsOff:
        return { kind: 'host-inputs', on: false };
      case COMMAND_OPCODE.step:
        return { kind: 'step', cycles: r[1] | (r[2] << 8) };
      default:
        return { kind: 'inputs', values: this.vector.layout ? unpackFields(this.vector.layout, r, 1) : [] };
    }
  }

  private reject(events: CommandEvent[], why: string): void {
    this.counts.rejected++;
    events.push({ kind: 'error', message: `command at byte ${this.start}: ${why}; ignored`, offset: this.start });
  }
}

/** Human-readable one-line form of a command, for logs and error messages. */
export function describeCommand(cmd: HostCommand): string {
  switch (cmd.kind) {
    case 'step':
      return `step ${cmd.cycles}`;
    case 'host-inputs':
      return `host inputs ${cmd.on ? 'on' : 'off'}`;
    case 'inputs':
      return `inputs ${cmd.values.map((v) => `0x${v.toString(16)}`).join(' ')}`;
    default:
      return cmd.kind;
  }
}
