// The capture file format (docs/capture-format.md): a magic, a JSON header record, then self-delimiting,
// timestamped, checksummed records of the bytes received, appended as they arrive so that a crash or a
// pulled cable costs at most the record being written.
import { z } from 'zod';
import { crc32 } from './crc32';

/** First 8 bytes of every capture: a byte with the top bit set, "TWCAP", CR, LF. */
export const CAPTURE_MAGIC = Uint8Array.of(0x89, 0x54, 0x57, 0x43, 0x41, 0x50, 0x0d, 0x0a);
export const CAPTURE_FORMAT_VERSION = 1;

/** Record kinds (one byte, readable letters so a hex dump shows them). */
export const RECORD = {
  header: 0x48, // 'H' UTF-8 JSON, CaptureHeader; always the first record
  received: 0x52, // 'R' bytes as they came from the board
  sent: 0x53, // 'S' bytes the host sent to the board (commands)
  note: 0x4e, // 'N' UTF-8 JSON, CaptureNote: something that happened to the link
  end: 0x45, // 'E' UTF-8 JSON, CaptureEnd: the recorder closed the file on purpose
} as const;

export type RecordKind = keyof typeof RECORD;
const KIND_BY_CODE = new Map<number, RecordKind>(Object.entries(RECORD).map(([k, v]) => [v, k as RecordKind]));

/** kind (1), body length (4), time in microseconds since the start (8), CRC-32 (4); little-endian. */
export const RECORD_HEAD_BYTES = 17;
/** Largest body a record may have; a larger length field means damage, not data. */
export const MAX_RECORD_BODY = 16 * 1024 * 1024;

export const CaptureFieldSchema = z.object({
  name: z.string().min(1),
  width: z.number().int().min(1).max(64),
  kind: z.enum(['input', 'state', 'register', 'status', 'output']),
  source: z.string(),
});

export const CaptureHeaderSchema = z.object({
  format: z.literal('twinstep-capture'),
  formatVersion: z.literal(CAPTURE_FORMAT_VERSION),
  tool: z.object({ name: z.literal('twinstep'), version: z.string() }),
  design: z.object({
    name: z.string(),
    file: z.string(),
    /** Full design fingerprint, 64 hex digits. */
    fingerprint: z.string().regex(/^[0-9a-f]{64}$/),
    /** The 32 bits the identification frames carry, 8 hex digits. */
    fingerprint32: z.string().regex(/^[0-9a-f]{8}$/),
    encoding: z.enum(['binary', 'gray', 'onehot', 'custom']),
  }),
  frame: z.object({ payloadBits: z.number().int().min(1), fields: z.array(CaptureFieldSchema).min(1) }),
  link: z.object({ port: z.string(), baud: z.number().positive(), clockHz: z.number().positive().nullable() }),
  /** Wall-clock time of the first byte of the capture, ISO 8601 with time zone. */
  startedAt: z.string().datetime({ offset: true }),
  /** What the host did: listened, or drove a stimulus file. */
  mode: z.object({ drive: z.string().nullable(), cycles: z.number().int().min(0).nullable() }),
});
export type CaptureHeader = z.infer<typeof CaptureHeaderSchema>;

export const CaptureNoteSchema = z.object({ event: z.string(), message: z.string() });
export type CaptureNote = z.infer<typeof CaptureNoteSchema>;

export const CaptureEndSchema = z.object({
  reason: z.string(),
  receivedBytes: z.number().int().min(0),
  sentBytes: z.number().int().min(0),
});
export type CaptureEnd = z.infer<typeof CaptureEndSchema>;

/** One record with its head filled in and its CRC computed. */
export function encodeRecord(kind: RecordKind, timeMicros: number, body: Uint8Array): Uint8Array {
  if (body.length > MAX_RECORD_BODY) throw new RangeError(`capture record of ${body.length} bytes exceeds ${MAX_RECORD_BODY}`);
  const out = new Uint8Array(RECORD_HEAD_BYTES + body.length);
  const view = new DataView(out.buffer);
  const t = Math.max(0, Math.floor(timeMicros));
  view.setUint8(0, RECORD[kind]);
  view.setUint32(1, body.length, true);
  view.setUint32(5, t % 2 ** 32, true);
  view.setUint32(9, Math.floor(t / 2 ** 32), true);
  out.set(body, RECORD_HEAD_BYTES);
  view.setUint32(13, recordCrc(out, 0, body.length), true);
  return out;
}

/** CRC-32 over the first 13 head bytes and the body of the record at `at`. */
export function recordCrc(buf: Uint8Array, at: number, bodyLength: number): number {
  const head = crc32(buf, at, at + 13);
  return crc32(buf, at + RECORD_HEAD_BYTES, at + RECORD_HEAD_BYTES + bodyLength, head);
}

export function recordKindOf(code: number): RecordKind | undefined {
  return KIND_BY_CODE.get(code);
}

const utf8 = new TextEncoder();

export function encodeJsonRecord(kind: 'header' | 'note' | 'end', timeMicros: number, value: unknown): Uint8Array {
  return encodeRecord(kind, timeMicros, utf8.encode(JSON.stringify(value)));
}

/** The file's opening bytes: magic plus the header record. */
export function encodeCaptureStart(header: CaptureHeader): Uint8Array {
  const rec = encodeJsonRecord('header', 0, CaptureHeaderSchema.parse(header));
  const out = new Uint8Array(CAPTURE_MAGIC.length + rec.length);
  out.set(CAPTURE_MAGIC);
  out.set(rec, CAPTURE_MAGIC.length);
  return out;
}
