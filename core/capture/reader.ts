// Streaming capture reader: file bytes in, header and records out. Every intact record is delivered, a
// damaged stretch is skipped up to the next record whose checksum holds, and a record cut off at the end
// of the file (the recorder was killed or the disk filled) is a warning, never an exception.
import {
  CAPTURE_MAGIC,
  CaptureEndSchema,
  CaptureHeaderSchema,
  CaptureNoteSchema,
  MAX_RECORD_BODY,
  RECORD_HEAD_BYTES,
  recordCrc,
  recordKindOf,
  type CaptureEnd,
  type CaptureHeader,
  type CaptureNote,
  type RecordKind,
} from './format';

export interface CaptureRecord {
  kind: Exclude<RecordKind, 'header'>;
  /** Microseconds since the start of the capture. */
  timeMicros: number;
  /** File offset of the record. */
  offset: number;
  /** The record body; a view into the reader's buffer, valid only during the callback. */
  body: Uint8Array;
}

export interface CaptureProblem {
  severity: 'warning' | 'error';
  message: string;
  offset: number;
}

export interface CaptureSink {
  header(h: CaptureHeader): void;
  record(r: CaptureRecord): void;
  problem(p: CaptureProblem): void;
}

export interface CaptureReadSummary {
  /** Bytes pushed. */
  bytes: number;
  records: number;
  receivedBytes: number;
  /** The header was read and valid. */
  usable: boolean;
  /** The file ends inside a record. */
  truncated: boolean;
  /** Bytes skipped as damaged. */
  skippedBytes: number;
  /** The recorder's own end record, if it wrote one (absent when it was killed or lost power). */
  end: CaptureEnd | null;
  notes: CaptureNote[];
}

/** Notes kept for the summary; a capture with more is unusual and the rest still reach the sink. */
const MAX_NOTES = 100;

const utf8 = new TextDecoder('utf-8', { fatal: true });

export class CaptureReader {
  private buf: Uint8Array = new Uint8Array(0);
  /** Backing store for `buf` when bytes must be kept between pushes. */
  private store: Uint8Array = new Uint8Array(0);
  /** File offset of buf[0]. */
  private bufOffset = 0;
  private stage: 'magic' | 'header' | 'records' | 'failed' = 'magic';
  private damageFrom = -1;
  private ended = false;
  private readonly summary: CaptureReadSummary = { bytes: 0, records: 0, receivedBytes: 0, usable: false, truncated: false, skippedBytes: 0, end: null, notes: [] };

  constructor(private readonly sink: CaptureSink) {}

  /** Feed the next bytes of the file, in chunks of any size. */
  push(chunk: Uint8Array): void {
    if (this.ended || !(chunk instanceof Uint8Array) || chunk.length === 0) return;
    this.summary.bytes += chunk.length;
    if (this.stage === 'failed') return;
    if (this.buf.length === 0) this.buf = chunk;
    else {
      // Grow by doubling so a record spread over many small chunks costs linear time.
      const need = this.buf.length + chunk.length;
      if (this.store.length < need) {
        const bigger = new Uint8Array(Math.max(need, this.store.length * 2, 4096));
        bigger.set(this.buf);
        this.store = bigger;
      } else if (this.buf.buffer !== this.store.buffer || this.buf.byteOffset !== this.store.byteOffset) this.store.set(this.buf);
      this.store.set(chunk, this.buf.length);
      this.buf = this.store.subarray(0, need);
    }
    this.parse(false);
  }

  /** The file has ended: report what is left over and return the summary. */
  end(): CaptureReadSummary {
    if (!this.ended) {
      this.ended = true;
      if (this.stage !== 'failed') this.parse(true);
      if (this.stage === 'magic' || this.stage === 'header') {
        this.fail(this.summary.bytes === 0 ? 'the file is empty' : `the file ends after ${this.summary.bytes} bytes, inside the ${this.stage === 'magic' ? 'magic' : 'header record'}`, 0);
      }
    }
    return { ...this.summary, notes: this.summary.notes.slice() };
  }

  private fail(message: string, offset: number): void {
    this.stage = 'failed';
    this.buf = new Uint8Array(0);
    this.sink.problem({ severity: 'error', message, offset });
  }

  private parse(final: boolean): void {
    const buf = this.buf;
    let pos = 0;
    if (this.stage === 'magic') {
      if (buf.length < CAPTURE_MAGIC.length) {
        if (buf.length === 0) return;
        if (final || !isPrefix(buf, CAPTURE_MAGIC)) this.notCapture(buf);
        else this.keep(buf, 0);
        return;
      }
      if (!isPrefix(buf.subarray(0, CAPTURE_MAGIC.length), CAPTURE_MAGIC)) return this.notCapture(buf);
      pos = CAPTURE_MAGIC.length;
      this.stage = 'header';
    }
    while (this.stage !== 'failed') {
      const left = buf.length - pos;
      const at = this.bufOffset + pos;
      if (left < RECORD_HEAD_BYTES) {
        // A cut-off header is reported by end(); a cut-off record later is a warning.
        if (final && left > 0 && this.stage === 'records') this.tail(buf, pos);
        break;
      }
      const kind = recordKindOf(buf[pos]);
      const length = readU32(buf, pos + 1);
      if (kind === undefined || length > MAX_RECORD_BODY || (this.stage === 'header') !== (kind === 'header')) {
        if (this.stage === 'header') return this.fail(`the first record at byte ${at} is not a header record: this capture is damaged at its start`, at);
        this.damaged(at);
        pos++;
        continue;
      }
      if (left < RECORD_HEAD_BYTES + length) {
        if (!final) break;
        if (this.stage === 'header') return this.fail(`the header record at byte ${at} is cut off (${left} of ${RECORD_HEAD_BYTES + length} bytes)`, at);
        if (this.damageFrom >= 0 || this.intactRecordAfter(buf, pos + 1)) {
          this.damaged(at);
          pos++;
          continue;
        }
        this.tail(buf, pos);
        pos = buf.length;
        break;
      }
      if (recordCrc(buf, pos, length) !== readU32(buf, pos + 13)) {
        if (this.stage === 'header') return this.fail(`the header record at byte ${at} fails its CRC-32 check`, at);
        this.damaged(at);
        pos++;
        continue;
      }
      this.repaired(at);
      const body = buf.subarray(pos + RECORD_HEAD_BYTES, pos + RECORD_HEAD_BYTES + length);
      const timeMicros = readU32(buf, pos + 5) + readU32(buf, pos + 9) * 2 ** 32;
      pos += RECORD_HEAD_BYTES + length;
      this.deliver(kind, timeMicros, at, body);
    }
    this.keep(buf, pos);
  }

  private deliver(kind: RecordKind, timeMicros: number, offset: number, body: Uint8Array): void {
    if (kind === 'header') {
      const parsed = parseJson(body, CaptureHeaderSchema);
      if (!parsed.ok) return this.fail(`the header record is not a valid capture header: ${parsed.error}`, offset);
      this.stage = 'records';
      this.summary.usable = true;
      this.sink.header(parsed.value);
      return;
    }
    this.summary.records++;
    if (kind === 'received') this.summary.receivedBytes += body.length;
    if (kind === 'note') {
      const note = parseJson(body, CaptureNoteSchema);
      if (note.ok && this.summary.notes.length < MAX_NOTES) this.summary.notes.push(note.value);
    }
    if (kind === 'end') {
      const end = parseJson(body, CaptureEndSchema);
      if (end.ok) this.summary.end = end.value;
    }
    this.sink.record({ kind, timeMicros, offset, body });
  }

  /** Keep the unparsed rest for the next push (copied into the store: the caller may reuse its chunk). */
  private keep(buf: Uint8Array, pos: number): void {
    if (this.stage === 'failed') return;
    this.bufOffset += pos;
    const rest = buf.length - pos;
    if (rest <= 0) {
      this.buf = new Uint8Array(0);
      return;
    }
    if (this.store.length < rest) this.store = new Uint8Array(Math.max(rest, 4096));
    if (buf.buffer === this.store.buffer) this.store.copyWithin(0, buf.byteOffset + pos, buf.byteOffset + buf.length);
    else this.store.set(buf.subarray(pos));
    this.buf = this.store.subarray(0, rest);
  }

  private notCapture(buf: Uint8Array): void {
    const shown = Array.from(buf.subarray(0, 8), (b) => b.toString(16).padStart(2, '0')).join(' ');
    this.fail(`not a Twinstep capture: it does not start with the capture magic (found ${shown || 'nothing'})`, 0);
  }

  private tail(buf: Uint8Array, pos: number): void {
    const at = this.bufOffset + pos;
    if (this.damageFrom >= 0) {
      this.summary.skippedBytes += at - this.damageFrom + (buf.length - pos);
      this.sink.problem({ severity: 'warning', message: `bytes ${this.damageFrom} to ${this.bufOffset + buf.length - 1} are damaged and were skipped; no intact record follows`, offset: this.damageFrom });
      this.damageFrom = -1;
      return;
    }
    this.summary.truncated = true;
    this.sink.problem({
      severity: 'warning',
      message: `the capture ends inside a record at byte ${at} (${buf.length - pos} bytes of it present): the recorder stopped while writing it; everything before it was read`,
      offset: at,
    });
  }

  private damaged(at: number): void {
    if (this.damageFrom < 0) this.damageFrom = at;
  }

  private repaired(at: number): void {
    if (this.damageFrom < 0) return;
    this.summary.skippedBytes += at - this.damageFrom;
    this.sink.problem({ severity: 'warning', message: `bytes ${this.damageFrom} to ${at - 1} are damaged and were skipped; reading resumes with the intact record at byte ${at}`, offset: this.damageFrom });
    this.damageFrom = -1;
  }

  /** Is there a complete record with a good CRC anywhere from `from` on? (Tells damage from a cut-off end.) */
  private intactRecordAfter(buf: Uint8Array, from: number): boolean {
    for (let p = from; p + RECORD_HEAD_BYTES <= buf.length; p++) {
      const kind = recordKindOf(buf[p]);
      const length = readU32(buf, p + 1);
      if (kind === undefined || kind === 'header' || length > MAX_RECORD_BODY || p + RECORD_HEAD_BYTES + length > buf.length) continue;
      if (recordCrc(buf, p, length) === readU32(buf, p + 13)) return true;
    }
    return false;
  }
}

function readU32(b: Uint8Array, at: number): number {
  return (b[at] | (b[at + 1] << 8) | (b[at + 2] << 16) | (b[at + 3] << 24)) >>> 0;
}

function isPrefix(a: Uint8Array, of: Uint8Array): boolean {
  for (let i = 0; i < a.length && i < of.length; i++) if (a[i] !== of[i]) return false;
  return true;
}

function parseJson<T>(body: Uint8Array, schema: { safeParse(v: unknown): { success: true; data: T } | { success: false; error: { issues: { path: PropertyKey[]; message: string }[] } } }): { ok: true; value: T } | { ok: false; error: string } {
  let value: unknown;
  try {
    value = JSON.parse(utf8.decode(body));
  } catch (e) {
    return { ok: false, error: `not UTF-8 JSON (${(e as Error).message})` };
  }
  const r = schema.safeParse(value);
  if (!r.success) return { ok: false, error: r.error.issues.map((i) => `${i.path.map(String).join('.') || 'top level'}: ${i.message}`).join('; ') };
  return { ok: true, value: r.data };
}
