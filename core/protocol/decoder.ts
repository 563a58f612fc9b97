// Streaming decoder for the probe's serial stream: bytes in any chunking in, checked frames and errors out.
// It never throws on stream content and resynchronises at the next 0x00, so one bad byte costs at most its frame.
import { crc16 } from './crc';
import { cobsDecodeInto, cobsErrorText } from './cobs';
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
  unpackFields,
  type FrameLayout,
  type IdInfo,
} from './frame';

export type DecodeErrorKind = 'cobs' | 'length' | 'crc' | 'header' | 'overlong';

export type DecodedEvent =
  /** A checked cycle frame; `counter` is the 7-bit header counter, `values` one bit pattern per field. */
  | { kind: 'cycle'; counter: number; values: bigint[]; offset: number }
  /** A checked identification frame; `mismatch` says how it disagrees with what this decoder expects. */
  | { kind: 'id'; info: IdInfo; mismatch?: string; offset: number }
  /** Frames missing before the frame at `offset`, judged from the counter (modulo 128). */
  | { kind: 'gap'; missing: number; expected: number; got: number; offset: number }
  /** A segment between delimiters that was not a valid frame. */
  | { kind: 'error'; error: DecodeErrorKind; message: string; offset: number };

export type DecoderStats = {
  /** Bytes pushed so far. */
  bytes: number;
  cycleFrames: number;
  idFrames: number;
  crcErrors: number;
  /** Bad COBS, a length no frame kind has, an unknown header, or a segment longer than any frame. */
  framingErrors: number;
  /** Frames missing according to counter gaps (a gap of 128 or more frames cannot be seen). */
  droppedFrames: number;
  idMismatches: number;
};

export type DecoderOptions = {
  /** Fingerprint the identification frames must carry; any fingerprint is accepted when absent. */
  expectedFingerprint?: number;
  /**
   * Ignore bytes up to the first 0x00: use it when the port may open in the middle of a frame, so the
   * partial frame is not reported as an error. The first frame is then lost if the stream starts exactly on it.
   */
  waitForDelimiter?: boolean;
};

export class FrameDecoder {
  private readonly segment = new Uint8Array(MAX_WIRE_SEGMENT);
  private readonly raw = new Uint8Array(MAX_FRAME_BYTES);
  private readonly cycleLength: number;
  private readonly expectedFingerprint: number | undefined;
  private segmentLength = 0;
  private segmentStart = 0;
  private overlong = false;
  private synced: boolean;
  private expectedCounter: number | null = null;
  private readonly counts: DecoderStats = { bytes: 0, cycleFrames: 0, idFrames: 0, crcErrors: 0, framingErrors: 0, droppedFrames: 0, idMismatches: 0 };

  constructor(
    private readonly layout: FrameLayout,
    options: DecoderOptions = {},
  ) {
    this.cycleLength = rawCycleFrameLength(layout);
    this.expectedFingerprint = options.expectedFingerprint;
    this.synced = !options.waitForDelimiter;
  }

  get stats(): Readonly<DecoderStats> {
    return { ...this.counts };
  }

  /** Feed the next bytes of the stream; returns the events completed by them, in stream order. */
  push(chunk: Uint8Array): DecodedEvent[] {
    const events: DecodedEvent[] = [];
    if (!(chunk instanceof Uint8Array)) return events;
    const base = this.counts.bytes;
    for (let i = 0; i < chunk.length; i++) {
      const b = chunk[i];
      if (b !== 0) {
        if (this.segmentLength === 0 && !this.overlong) this.segmentStart = base + i;
        if (!this.synced || this.overlong) continue;
        if (this.segmentLength < MAX_WIRE_SEGMENT) {
          this.segment[this.segmentLength++] = b;
        } else {
          this.overlong = true;
          this.segmentLength = 0;
          this.fail(events, 'overlong', `no delimiter within ${MAX_WIRE_SEGMENT} bytes; skipping to the next 0x00`, this.segmentStart);
        }
        continue;
      }
      // A delimiter: close whatever came before it. Repeated 0x00 bytes are idle filler, not frames.
      if (this.synced && !this.overlong && this.segmentLength > 0) this.decodeSegment(events);
      this.synced = true;
      this.overlong = false;
      this.segmentLength = 0;
    }
    this.counts.bytes += chunk.length;
    return events;
  }

  /** Forget any partial frame and the counter expectation (e.g. after reopening the port). */
  reset(): void {
    this.segmentLength = 0;
    this.overlong = false;
    this.expectedCounter = null;
  }

  private decodeSegment(events: DecodedEvent[]): void {
    const at = this.segmentStart;
    const n = cobsDecodeInto(this.segment, this.segmentLength, this.raw);
    if (n < 0) return this.fail(events, 'cobs', cobsErrorText(n), at);
    const raw = this.raw;
    if (n !== this.cycleLength && n !== ID_FRAME_BYTES) {
      return this.fail(events, 'length', `frame of ${n} bytes; expected ${this.cycleLength} (cycle) or ${ID_FRAME_BYTES} (identification)`, at);
    }
    const computed = crc16(raw, 0, n - 2);
    const received = (raw[n - 2] << 8) | raw[n - 1];
    if (computed !== received) {
      this.counts.crcErrors++;
      events.push({ kind: 'error', error: 'crc', message: `frame at stream byte ${at}: CRC mismatch (received 0x${hex4(received)}, computed 0x${hex4(computed)})`, offset: at });
      return;
    }
    const header = raw[0];
    if ((header & HEADER_CYCLE_MASK) === 0 && n === this.cycleLength) return this.acceptCycle(events, header, at);
    if (header === HEADER_ID && n === ID_FRAME_BYTES) return this.acceptId(events, at);
    return this.fail(events, 'header', `header 0x${header.toString(16).padStart(2, '0')} does not fit a frame of ${n} bytes`, at);
  }

  private acceptCycle(events: DecodedEvent[], counter: number, at: number): void {
    this.noteCounter(events, counter, at);
    this.expectedCounter = (counter + 1) % COUNTER_MODULUS;
    this.counts.cycleFrames++;
    events.push({ kind: 'cycle', counter, values: unpackFields(this.layout, this.raw, 1), offset: at });
  }

  private acceptId(events: DecodedEvent[], at: number): void {
    const info = readIdBody(this.raw);
    this.counts.idFrames++;
    // After a reset the counter restarts, so a jump there is not a loss.
    if (!info.afterReset) this.noteCounter(events, info.nextCounter, at);
    this.expectedCounter = info.nextCounter;
    const mismatch = this.idMismatch(info);
    if (mismatch) {
      this.counts.idMismatches++;
      events.push({ kind: 'id', info, mismatch, offset: at });
    } else events.push({ kind: 'id', info, offset: at });
  }

  private noteCounter(events: DecodedEvent[], got: number, at: number): void {
    if (this.expectedCounter === null || got === this.expectedCounter) return;
    const missing = (got - this.expectedCounter + COUNTER_MODULUS) % COUNTER_MODULUS;
    this.counts.droppedFrames += missing;
    events.push({ kind: 'gap', missing, expected: this.expectedCounter, got, offset: at });
  }

  private idMismatch(info: IdInfo): string | undefined {
    const problems: string[] = [];
    if (this.expectedFingerprint !== undefined && info.fingerprint !== this.expectedFingerprint >>> 0) {
      problems.push(`fingerprint 0x${hex8(info.fingerprint)} is not the expected 0x${hex8(this.expectedFingerprint >>> 0)} (the board runs another design)`);
    }
    if (info.layoutVersion !== LAYOUT_VERSION) problems.push(`layout version ${info.layoutVersion} is not ${LAYOUT_VERSION}`);
    if (info.payloadBits !== this.layout.payloadBits) problems.push(`payload of ${info.payloadBits} bits is not the expected ${this.layout.payloadBits}`);
    return problems.length > 0 ? problems.join('; ') : undefined;
  }

  private fail(events: DecodedEvent[], error: DecodeErrorKind, what: string, at: number): void {
    this.counts.framingErrors++;
    const message = what.startsWith('frame at') ? what : `frame at stream byte ${at}: ${what}`;
    events.push({ kind: 'error', error, message, offset: at });
  }
}

function hex4(v: number): string {
  return v.toString(16).padStart(4, '0');
}

function hex8(v: number): string {
  return v.toString(16).padStart(8, '0');
}
