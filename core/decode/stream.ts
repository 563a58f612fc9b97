// Allocation-free stream decoder for replay and live comparison: one pass over the bytes, COBS undone on
// the fly, checked frames handed to a sink as raw bytes instead of event objects with bigint fields.
import { CRC16_PARAMS } from '../protocol/crc';
import { cobsErrorText, COBS_OVERRUN } from '../protocol/cobs';
import {
  COUNTER_MODULUS,
  HEADER_CYCLE_MASK,
  HEADER_ID,
  ID_FRAME_BYTES,
  LAYOUT_VERSION,
  MAX_FRAME_BYTES,
  MAX_WIRE_SEGMENT,
  rawCycleFrameLength,
  readIdBody,
  type FrameLayout,
  type IdInfo,
} from '../protocol/frame';
import type { DecodeErrorKind, DecoderOptions, DecoderStats } from '../protocol/decoder';

/**
 * Receives what the decoder finds, in stream order. `raw` is the decoder's own buffer: header byte at 0,
 * payload from 1, CRC last; it is valid only during the call (copy what must outlive it).
 */
export interface FrameSink {
  cycle(counter: number, raw: Uint8Array, offset: number): void;
  id(info: IdInfo, mismatch: string | undefined, offset: number): void;
  gap(missing: number, expected: number, got: number, offset: number): void;
  error(kind: DecodeErrorKind, message: string, offset: number): void;
}

/** CRC-16 table for the catalogue parameters the protocol uses (same construction as core/protocol/crc). */
function crcTable(): Uint16Array {
  const table = new Uint16Array(256);
  for (let i = 0; i < 256; i++) {
    let r = i << 8;
    for (let bit = 0; bit < 8; bit++) r = r & 0x8000 ? ((r << 1) ^ CRC16_PARAMS.poly) & 0xffff : (r << 1) & 0xffff;
    table[i] = r;
  }
  return table;
}

const CRC_TABLE = crcTable();

/**
 * Same guarantees and the same findings as core/protocol's FrameDecoder (never throws, resynchronises at the
 * next 0x00, counts every error, reports gaps from the counter), with the same messages; only the delivery
 * differs. Keeping one pass and no per-frame allocation is what lets replay run well above line rate.
 */
export class StreamDecoder {
  private readonly raw = new Uint8Array(MAX_FRAME_BYTES + 1);
  private readonly cycleLength: number;
  private readonly expectedFingerprint: number | undefined;
  private readonly payloadBits: number;
  // Segment state between delimiters.
  private segLength = 0;
  private segStart = 0;
  private overlong = false;
  private synced: boolean;
  // On-the-fly COBS: data bytes left in the current run, its code, bytes decoded so far.
  private run = 0;
  private code = 0;
  private decoded = 0;
  private expectedCounter = -1;
  private readonly counts: DecoderStats = { bytes: 0, cycleFrames: 0, idFrames: 0, crcErrors: 0, framingErrors: 0, droppedFrames: 0, idMismatches: 0 };

  constructor(
    layout: FrameLayout,
    private readonly sink: FrameSink,
    options: DecoderOptions = {},
  ) {
    this.cycleLength = rawCycleFrameLength(layout);
    this.payloadBits = layout.payloadBits;
    this.expectedFingerprint = options.expectedFingerprint;
    this.synced = !options.waitForDelimiter;
  }

  get stats(): Readonly<DecoderStats> {
    return { ...this.counts };
  }

  /** Bytes pushed so far (cheaper than `stats` for progress displays). */
  get bytes(): number {
    return this.counts.bytes;
  }

  /** Feed the next bytes of the stream, in chunks of any size; findings go to the sink. Never throws on content. */
  push(chunk: Uint8Array): void {
    if (!(chunk instanceof Uint8Array)) return;
    const raw = this.raw;
    const base = this.counts.bytes;
    const n = chunk.length;
    // A whole cycle frame on the wire: stuffed bytes plus the delimiter.
    const wire = this.cycleLength + 2;
    let i = 0;
    while (i < n) {
      // Fast path: at a frame boundary with a complete cycle frame in the chunk, undo COBS in one tight loop.
      // Anything unusual (a zero inside, a run past the end) falls through to the byte-wise path below,
      // which then sees exactly the same bytes, so both paths report the same findings.
      if (this.segLength === 0 && this.synced && !this.overlong && i + wire <= n && chunk[i + wire - 1] === 0) {
        const end = i + wire - 1;
        const crc = this.unstuff(chunk, i, end);
        if (crc >= 0) {
          this.segStart = base + i;
          if (crc === CRC16_PARAMS.residue && raw[0] < COUNTER_MODULUS) this.acceptCycle(raw[0]);
          else this.frame(this.cycleLength);
          i = end + 1;
          continue;
        }
      }
      this.pushByte(chunk[i], base + i);
      i++;
    }
    this.counts.bytes += n;
  }

  /**
   * Undo COBS for chunk[start, end) into the raw buffer, expecting exactly a cycle frame's length, and return
   * the CRC register after the whole raw frame (check word included: 0 for an intact frame); -1 when the
   * bytes are not such a frame, which the byte-wise path then handles.
   */
  private unstuff(chunk: Uint8Array, start: number, end: number): number {
    const raw = this.raw;
    let r = start;
    let w = 0;
    let crc: number = CRC16_PARAMS.init;
    while (r < end) {
      const code = chunk[r++];
      const runEnd = r + code - 1;
      if (code === 0 || runEnd > end) return -1;
      for (; r < runEnd; r++) {
        const b = chunk[r];
        if (b === 0) return -1;
        raw[w++] = b;
        crc = ((crc << 8) & 0xff00) ^ CRC_TABLE[(crc >>> 8) ^ b];
      }
      if (code !== 0xff && r < end) {
        raw[w++] = 0;
        crc = ((crc << 8) & 0xff00) ^ CRC_TABLE[crc >>> 8];
      }
    }
    return w === this.cycleLength ? crc : -1;
  }

  /** The byte-wise path: one byte of the stream at stream offset `at`. */
  private pushByte(b: number, at: number): void {
    if (b !== 0) {
      if (this.segLength === 0 && !this.overlong) this.segStart = at;
      if (!this.synced || this.overlong) return;
      if (this.segLength === MAX_WIRE_SEGMENT) {
        this.overlong = true;
        this.segLength = 0;
        this.fail('overlong', `no delimiter within ${MAX_WIRE_SEGMENT} bytes; skipping to the next 0x00`, this.segStart);
        return;
      }
      if (this.run === 0) {
        // A code byte: the previous short run, now known not to end the frame, implies a zero.
        if (this.segLength > 0 && this.code !== 0xff) this.raw[this.decoded++] = 0;
        this.code = b;
        this.run = b - 1;
      } else {
        this.raw[this.decoded++] = b;
        this.run--;
      }
      this.segLength++;
      return;
    }
    // A delimiter closes the segment; repeated 0x00 bytes are idle filler.
    if (this.synced && !this.overlong && this.segLength > 0) {
      if (this.run !== 0) this.fail('cobs', cobsErrorText(COBS_OVERRUN), this.segStart);
      else this.frame(this.decoded);
    }
    this.synced = true;
    this.overlong = false;
    this.segLength = 0;
    this.run = 0;
    this.code = 0;
    this.decoded = 0;
  }

  /** Forget any partial frame and the counter expectation (e.g. after reopening the port). */
  reset(): void {
    this.segLength = 0;
    this.run = 0;
    this.code = 0;
    this.decoded = 0;
    this.overlong = false;
    this.expectedCounter = -1;
  }

  /** Checks in the order the protocol document gives: length, CRC, header kind. */
  private frame(n: number): void {
    const raw = this.raw;
    const at = this.segStart;
    if (n !== this.cycleLength && n !== ID_FRAME_BYTES) {
      this.fail('length', `frame of ${n} bytes; expected ${this.cycleLength} (cycle) or ${ID_FRAME_BYTES} (identification)`, at);
      return;
    }
    let r: number = CRC16_PARAMS.init;
    const end = n - 2;
    for (let i = 0; i < end; i++) r = ((r << 8) & 0xff00) ^ CRC_TABLE[((r >>> 8) ^ raw[i]) & 0xff];
    const received = (raw[end] << 8) | raw[end + 1];
    if (r !== received) {
      this.counts.crcErrors++;
      this.sink.error('crc', `frame at stream byte ${at}: CRC mismatch (received 0x${hex(received, 4)}, computed 0x${hex(r, 4)})`, at);
      return;
    }
    const header = raw[0];
    if ((header & HEADER_CYCLE_MASK) === 0 && n === this.cycleLength) {
      this.acceptCycle(header);
      return;
    }
    if (header === HEADER_ID && n === ID_FRAME_BYTES) {
      this.acceptId(at);
      return;
    }
    this.fail('header', `header 0x${hex(header, 2)} does not fit a frame of ${n} bytes`, at);
  }

  private acceptCycle(counter: number): void {
    const at = this.segStart;
    const expected = this.expectedCounter;
    if (expected >= 0 && counter !== expected) this.noteGap(expected, counter, at);
    this.expectedCounter = counter + 1 === COUNTER_MODULUS ? 0 : counter + 1;
    this.counts.cycleFrames++;
    this.sink.cycle(counter, this.raw, at);
  }

  private acceptId(at: number): void {
    const info = readIdBody(this.raw);
    this.counts.idFrames++;
    // After a reset the counter restarts, so a jump there is not a loss.
    if (!info.afterReset && this.expectedCounter >= 0 && info.nextCounter !== this.expectedCounter) this.noteGap(this.expectedCounter, info.nextCounter, at);
    this.expectedCounter = info.nextCounter;
    const problems: string[] = [];
    if (this.expectedFingerprint !== undefined && info.fingerprint !== this.expectedFingerprint >>> 0) {
      problems.push(`fingerprint 0x${hex(info.fingerprint, 8)} is not the expected 0x${hex(this.expectedFingerprint >>> 0, 8)} (the board runs another design)`);
    }
    if (info.layoutVersion !== LAYOUT_VERSION) problems.push(`layout version ${info.layoutVersion} is not ${LAYOUT_VERSION}`);
    if (info.payloadBits !== this.payloadBits) problems.push(`payload of ${info.payloadBits} bits is not the expected ${this.payloadBits}`);
    if (problems.length > 0) this.counts.idMismatches++;
    this.sink.id(info, problems.length > 0 ? problems.join('; ') : undefined, at);
  }

  private noteGap(expected: number, got: number, at: number): void {
    const missing = (got - expected + COUNTER_MODULUS) % COUNTER_MODULUS;
    this.counts.droppedFrames += missing;
    this.sink.gap(missing, expected, got, at);
  }

  private fail(kind: DecodeErrorKind, what: string, at: number): void {
    this.counts.framingErrors++;
    this.sink.error(kind, `frame at stream byte ${at}: ${what}`, at);
  }
}

function hex(v: number, digits: number): string {
  return v.toString(16).padStart(digits, '0');
}
