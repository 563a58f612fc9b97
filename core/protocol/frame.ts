// The probe's frame format: a header byte, the bit-packed payload and a CRC-16, COBS-stuffed and ended by 0x00.
// Everything here is independent of any one design: a design only contributes its list of fields.
import { crc16 } from './crc';
import { cobsEncode } from './cobs';

/** One bit-packed payload field; values travel as unsigned bit patterns of exactly `width` bits. */
export type FrameField = { name: string; width: number };

/** A checked field list with its derived sizes; build it with `makeLayout`. */
export type FrameLayout = {
  readonly fields: readonly FrameField[];
  /** Bit offset of each field inside the payload (field 0 starts at bit 0). */
  readonly offsets: readonly number[];
  readonly payloadBits: number;
  readonly payloadBytes: number;
};

/** Revision of this byte layout, carried in every identification frame. */
export const LAYOUT_VERSION = 1;

/** Cycle frames carry the low 7 bits of the design cycle counter in the header. */
export const COUNTER_BITS = 7;
export const COUNTER_MODULUS = 1 << COUNTER_BITS;

/** Header byte values: top bit clear is a cycle frame; 0x80 is the identification frame; 0x81-0xFF reserved. */
export const HEADER_CYCLE_MASK = 0x80;
export const HEADER_ID = 0x80;

/** Identification frame body: version, fingerprint (4), payload bits (2), reset flag + next counter. */
export const ID_BODY_BYTES = 8;
/** Header + body + CRC. */
export const ID_FRAME_BYTES = 1 + ID_BODY_BYTES + 2;
/** Bit 7 of the last body byte: this identification frame is the first one after a reset. */
export const ID_FLAG_AFTER_RESET = 0x80;

/**
 * A transmitter sends an identification frame before the first cycle frame after reset and then before
 * every cycle frame whose counter is 0, i.e. once per counter wrap (128 frames).
 */
export const ID_PERIOD = COUNTER_MODULUS;

/** Frames are kept to one COBS run (at most 254 bytes before stuffing), so stuffing adds exactly one byte. */
export const MAX_FRAME_BYTES = 254;
export const MAX_PAYLOAD_BYTES = MAX_FRAME_BYTES - 3;
export const MAX_PAYLOAD_BITS = MAX_PAYLOAD_BYTES * 8;
/** Longest run of non-zero bytes between two delimiters that any valid frame can produce. */
export const MAX_WIRE_SEGMENT = MAX_FRAME_BYTES + 1;

/** Bytes a cycle frame occupies before stuffing: header, payload, CRC. */
export function rawCycleFrameLength(layout: FrameLayout): number {
  return 1 + layout.payloadBytes + 2;
}

/** Bytes a cycle frame occupies on the wire: one COBS code byte plus the raw frame plus the delimiter. */
export function wireCycleFrameLength(layout: FrameLayout): number {
  return rawCycleFrameLength(layout) + 2;
}

/** Every problem with a field list, each naming the field; empty when the list is usable. */
export function layoutProblems(fields: readonly FrameField[]): string[] {
  const problems: string[] = [];
  if (!Array.isArray(fields) || fields.length === 0) return ['frame layout: at least one field is needed'];
  const seen = new Set<string>();
  let total = 0;
  fields.forEach((f, i) => {
    const where = `frame layout field ${i}${f && typeof f.name === 'string' ? ` '${f.name}'` : ''}`;
    if (!f || typeof f.name !== 'string' || f.name.length === 0) problems.push(`${where}: name must be a non-empty string`);
    else if (seen.has(f.name)) problems.push(`${where}: name used twice`);
    else seen.add(f.name);
    if (!f || !Number.isInteger(f.width) || f.width < 1 || f.width > 64) {
      problems.push(`${where}: width must be an integer from 1 to 64 (got ${f ? String(f.width) : 'nothing'})`);
    } else total += f.width;
  });
  if (total > MAX_PAYLOAD_BITS) {
    problems.push(`frame layout: payload of ${total} bits exceeds the ${MAX_PAYLOAD_BITS}-bit limit (${MAX_PAYLOAD_BYTES} bytes)`);
  }
  return problems;
}

export class FrameLayoutError extends Error {
  constructor(readonly problems: string[]) {
    super(problems.join('\n'));
    this.name = 'FrameLayoutError';
  }
}

/** Check a field list and compute offsets; throws FrameLayoutError listing every problem. */
export function makeLayout(fields: readonly FrameField[]): FrameLayout {
  const problems = layoutProblems(fields);
  if (problems.length > 0) throw new FrameLayoutError(problems);
  const offsets: number[] = [];
  let at = 0;
  for (const f of fields) {
    offsets.push(at);
    at += f.width;
  }
  return {
    fields: fields.map((f) => ({ name: f.name, width: f.width })),
    offsets,
    payloadBits: at,
    payloadBytes: Math.ceil(at / 8),
  };
}

function asLayout(fields: readonly FrameField[] | FrameLayout): FrameLayout {
  return 'offsets' in fields ? fields : makeLayout(fields);
}

/**
 * Pack values LSB-first: field 0 takes payload bits [0, w0), field 1 the next w1 bits, and so on;
 * payload bit k is bit (k mod 8) of payload byte floor(k / 8). Unused top bits of the last byte are 0.
 * In Verilog this is simply payload = {field_n-1, ..., field_1, field_0}, byte k = payload[8k+7:8k].
 */
export function packFields(fields: readonly FrameField[] | FrameLayout, values: readonly bigint[]): Uint8Array {
  const layout = asLayout(fields);
  if (values.length !== layout.fields.length) {
    throw new RangeError(`packFields: ${layout.fields.length} fields but ${values.length} values`);
  }
  let word = 0n;
  for (let i = layout.fields.length - 1; i >= 0; i--) {
    const f = layout.fields[i];
    const v = values[i];
    if (typeof v !== 'bigint' || v < 0n || v >> BigInt(f.width) !== 0n) {
      throw new RangeError(`packFields: value ${String(v)} of field '${f.name}' is not a ${f.width}-bit pattern`);
    }
    word = (word << BigInt(f.width)) | v;
  }
  const out = new Uint8Array(layout.payloadBytes);
  for (let k = 0; k < out.length; k++) {
    out[k] = Number(word & 0xffn);
    word >>= 8n;
  }
  return out;
}

/** Inverse of `packFields`; reads `bytes[start, start + payloadBytes)`. */
export function unpackFields(fields: readonly FrameField[] | FrameLayout, bytes: Uint8Array, start = 0): bigint[] {
  const layout = asLayout(fields);
  if (bytes.length - start < layout.payloadBytes) {
    throw new RangeError(`unpackFields: need ${layout.payloadBytes} payload bytes, got ${Math.max(0, bytes.length - start)}`);
  }
  const values: bigint[] = new Array(layout.fields.length);
  for (let i = 0; i < layout.fields.length; i++) values[i] = readBits(bytes, start, layout.offsets[i], layout.fields[i].width);
  return values;
}

/** Read `width` bits LSB-first from bit `offset` of the byte string at `start`, 24 bits at a time. */
function readBits(bytes: Uint8Array, start: number, offset: number, width: number): bigint {
  let result = 0n;
  let got = 0;
  while (got < width) {
    const bit = offset + got;
    const chunk = Math.min(24, width - got);
    let acc = 0;
    const first = start + (bit >>> 3);
    // Up to 4 bytes hold any 24-bit window that starts mid-byte.
    for (let b = 3; b >= 0; b--) acc = acc * 256 + (first + b < bytes.length ? bytes[first + b] : 0);
    const piece = Math.floor(acc / 2 ** (bit & 7)) % 2 ** chunk;
    result |= BigInt(piece) << BigInt(got);
    got += chunk;
  }
  return result;
}

function checkCounter(counter: number): void {
  if (!Number.isInteger(counter) || counter < 0) throw new RangeError(`cycle counter must be a non-negative integer (got ${counter})`);
}

/** Header, payload and CRC (high byte first) of a cycle frame, before stuffing. */
export function rawCycleFrame(layout: FrameLayout, counter: number, values: readonly bigint[]): Uint8Array {
  checkCounter(counter);
  const payload = packFields(layout, values);
  const raw = new Uint8Array(payload.length + 3);
  raw[0] = counter % COUNTER_MODULUS;
  raw.set(payload, 1);
  appendCrc(raw);
  return raw;
}

/** Write the CRC of raw[0, n-2) into the last two bytes, high byte first (the register's residue is then 0). */
function appendCrc(raw: Uint8Array): void {
  const crc = crc16(raw, 0, raw.length - 2);
  raw[raw.length - 2] = crc >>> 8;
  raw[raw.length - 1] = crc & 0xff;
}

/** Wire form of a raw frame: COBS plus the 0x00 delimiter. */
export function wireFrame(raw: Uint8Array): Uint8Array {
  const stuffed = cobsEncode(raw);
  const out = new Uint8Array(stuffed.length + 1);
  out.set(stuffed);
  return out;
}

/** Complete wire bytes of a cycle frame; `counter` may be the full cycle count (only its low 7 bits are sent). */
export function encodeCycleFrame(layout: FrameLayout, counter: number, values: readonly bigint[]): Uint8Array {
  return wireFrame(rawCycleFrame(layout, counter, values));
}

/** What an identification frame says about the transmitter. */
export type IdInfo = {
  /** 32-bit design fingerprint chosen by the design flow. */
  fingerprint: number;
  layoutVersion: number;
  payloadBits: number;
  /** Low 7 bits of the counter the next cycle frame will carry. */
  nextCounter: number;
  /** True on the identification frame sent right after reset. */
  afterReset: boolean;
};

/** Header, body and CRC of an identification frame, before stuffing. */
export function rawIdFrame(info: IdInfo): Uint8Array {
  const { fingerprint, layoutVersion, payloadBits, nextCounter } = info;
  if (!Number.isInteger(fingerprint) || fingerprint < 0 || fingerprint > 0xffffffff) throw new RangeError(`fingerprint must be a 32-bit unsigned integer (got ${fingerprint})`);
  if (!Number.isInteger(layoutVersion) || layoutVersion < 0 || layoutVersion > 255) throw new RangeError(`layout version must fit one byte (got ${layoutVersion})`);
  if (!Number.isInteger(payloadBits) || payloadBits < 0 || payloadBits > 0xffff) throw new RangeError(`payload width must fit 16 bits (got ${payloadBits})`);
  checkCounter(nextCounter);
  const raw = new Uint8Array(ID_FRAME_BYTES);
  raw[0] = HEADER_ID;
  raw[1] = layoutVersion;
  raw[2] = (fingerprint >>> 24) & 0xff;
  raw[3] = (fingerprint >>> 16) & 0xff;
  raw[4] = (fingerprint >>> 8) & 0xff;
  raw[5] = fingerprint & 0xff;
  raw[6] = payloadBits >>> 8;
  raw[7] = payloadBits & 0xff;
  raw[8] = (info.afterReset ? ID_FLAG_AFTER_RESET : 0) | nextCounter % COUNTER_MODULUS;
  appendCrc(raw);
  return raw;
}

/** Complete wire bytes of an identification frame. */
export function encodeIdFrame(info: IdInfo): Uint8Array {
  return wireFrame(rawIdFrame(info));
}

/** Read the body of a CRC-checked identification frame. */
export function readIdBody(raw: Uint8Array): IdInfo {
  return {
    layoutVersion: raw[1],
    fingerprint: ((raw[2] << 24) | (raw[3] << 16) | (raw[4] << 8) | raw[5]) >>> 0,
    payloadBits: (raw[6] << 8) | raw[7],
    nextCounter: raw[8] & (COUNTER_MODULUS - 1),
    afterReset: (raw[8] & ID_FLAG_AFTER_RESET) !== 0,
  };
}
