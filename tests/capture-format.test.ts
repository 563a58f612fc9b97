// The capture file format (docs/capture-format.md): record bytes as documented, read-back of every complete
// record, a warning (never a throw) for a capture cut at any byte, and recovery after damaged bytes.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { crc32 } from '../core/capture/crc32';
import { CAPTURE_MAGIC, encodeCaptureStart, encodeJsonRecord, encodeRecord, RECORD_HEAD_BYTES, type CaptureHeader } from '../core/capture/format';
import { CaptureReader, type CaptureProblem, type CaptureRecord } from '../core/capture/reader';
import { captureHeader } from '../core/capture/header';
import { concat, design } from './compare-frames';

/** CRC-32/ISO-HDLC bit by bit (reflected polynomial 0xEDB88320), written here independently of the table form. */
function crc32Bitwise(bytes: Uint8Array): number {
  let c = 0xffffffff;
  for (const b of bytes) {
    c ^= b;
    for (let k = 0; k < 8; k++) c = c & 1 ? (c >>> 1) ^ 0xedb88320 : c >>> 1;
  }
  return (c ^ 0xffffffff) >>> 0;
}

function header(): CaptureHeader {
  const d = design('tank_dosing');
  return captureHeader(d.m, d.layout, { port: '/dev/ttyUSB0', baud: 115200, clockHz: 12e6 }, new Date('2024-05-01T10:00:00Z'), { drive: null, cycles: null });
}

type Read = { header: CaptureHeader | null; records: { kind: string; time: number; offset: number; body: number[] }[]; problems: CaptureProblem[] };

function read(bytes: Uint8Array, chunk = bytes.length || 1): Read & { summary: ReturnType<CaptureReader['end']> } {
  const out: Read = { header: null, records: [], problems: [] };
  const r = new CaptureReader({
    header: (h) => (out.header = h),
    record: (rec: CaptureRecord) => out.records.push({ kind: rec.kind, time: rec.timeMicros, offset: rec.offset, body: Array.from(rec.body) }),
    problem: (p) => out.problems.push(p),
  });
  for (let at = 0; at < bytes.length; at += chunk) {
    // Hand the reader a copy and then scribble over it: the reader must not keep references to our chunk.
    const c = bytes.slice(at, at + chunk);
    r.push(c);
    c.fill(0xee);
  }
  return { ...out, summary: r.end() };
}

describe('checksums', () => {
  it('CRC-32/ISO-HDLC check value of "123456789" is 0xCBF43926 (Greg Cook, catalogue of parametrised CRC algorithms)', () => {
    expect(crc32(new TextEncoder().encode('123456789'))).toBe(0xcbf43926);
  });

  it('the table-driven CRC-32 equals the bitwise definition on random data, also when continued', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 300 }), fc.nat(300), (bytes, cut) => {
        const k = Math.min(cut, bytes.length);
        expect(crc32(bytes)).toBe(crc32Bitwise(bytes));
        expect(crc32(bytes, k, bytes.length, crc32(bytes, 0, k))).toBe(crc32Bitwise(bytes));
      }),
    );
  });
});

describe('record layout', () => {
  it('matches the byte layout of docs/capture-format.md', () => {
    const body = Uint8Array.of(0xaa, 0x00, 0x55);
    const rec = encodeRecord('received', 0x0102030405, body);
    expect(rec.length).toBe(17 + 3);
    // kind 'R', length 3 little-endian, time 0x0102030405 as 64-bit little-endian.
    expect(Array.from(rec.subarray(0, 13))).toEqual([0x52, 3, 0, 0, 0, 0x05, 0x04, 0x03, 0x02, 0x01, 0, 0, 0]);
    // CRC-32 over head bytes 0..12 followed by the body, stored little-endian at 13..16.
    const crc = crc32Bitwise(concat([rec.subarray(0, 13), body]));
    expect(Array.from(rec.subarray(13, 17))).toEqual([crc & 0xff, (crc >>> 8) & 0xff, (crc >>> 16) & 0xff, crc >>> 24]);
    expect(Array.from(rec.subarray(17))).toEqual([0xaa, 0x00, 0x55]);
  });

  it('a capture starts with the 8-byte magic and a header record holding the header as JSON', () => {
    const h = header();
    const start = encodeCaptureStart(h);
    expect(Array.from(start.subarray(0, 8))).toEqual([0x89, 0x54, 0x57, 0x43, 0x41, 0x50, 0x0d, 0x0a]);
    expect(start[8]).toBe(0x48);
    const json = JSON.parse(new TextDecoder().decode(start.subarray(8 + RECORD_HEAD_BYTES)));
    expect(json.design.fingerprint).toMatch(/^[0-9a-f]{64}$/);
    expect(json.frame.fields[0]).toEqual({ name: 'in.go_btn', width: 1, kind: 'input', source: 'go_btn' });
    expect(json.link).toEqual({ port: '/dev/ttyUSB0', baud: 115200, clockHz: 12e6 });
  });
});

/** A capture of `n` received records with varied sizes and times, plus a note and an end record. */
function sampleCapture(n: number): { bytes: Uint8Array; ends: number[]; headerEnd: number } {
  const parts = [encodeCaptureStart(header())];
  const ends: number[] = [];
  let size = parts[0].length;
  const headerEnd = size;
  for (let i = 0; i < n; i++) {
    const body = Uint8Array.from({ length: (i * 7) % 23 }, (_, k) => (i * 31 + k * 17) & 0xff);
    const rec = i === 3 ? encodeJsonRecord('note', i * 1000, { event: 'port-error', message: 'example' }) : encodeRecord(i % 5 === 4 ? 'sent' : 'received', i * 1000 + 7, body);
    parts.push(rec);
    size += rec.length;
    ends.push(size);
  }
  const end = encodeJsonRecord('end', n * 1000, { reason: 'stopped', receivedBytes: 1, sentBytes: 2 });
  parts.push(end);
  ends.push(size + end.length);
  return { bytes: concat(parts), ends, headerEnd };
}

describe('reading', () => {
  it('reads back every record, whatever the chunking', () => {
    const { bytes, ends } = sampleCapture(30);
    const whole = read(bytes);
    expect(whole.header?.design.name).toBe('tank_dosing');
    expect(whole.records.length).toBe(ends.length);
    expect(whole.records[0]).toMatchObject({ kind: 'received', time: 7 });
    expect(whole.records[3].kind).toBe('note');
    expect(whole.records.at(-1)?.kind).toBe('end');
    expect(whole.summary.end).toEqual({ reason: 'stopped', receivedBytes: 1, sentBytes: 2 });
    expect(whole.problems).toEqual([]);
    for (const chunk of [1, 2, 5, 17, 64]) expect(read(bytes, chunk).records).toEqual(whole.records);
  });

  it('a capture cut at any byte offset yields exactly the complete records before the cut and a warning', () => {
    const { bytes, ends, headerEnd } = sampleCapture(25);
    const all = read(bytes).records;
    for (let cut = 0; cut <= bytes.length; cut++) {
      const r = read(bytes.subarray(0, cut), 7);
      if (cut < headerEnd) {
        // Without its header the capture cannot be used: one error, no records, no exception.
        expect(r.summary.usable).toBe(false);
        expect(r.records).toEqual([]);
        expect(r.problems.map((p) => p.severity)).toEqual(['error']);
        continue;
      }
      const complete = ends.filter((e) => e <= cut).length;
      expect(r.records).toEqual(all.slice(0, complete));
      const atBoundary = cut === headerEnd || ends.includes(cut);
      expect(r.summary.truncated).toBe(!atBoundary);
      expect(r.problems.length).toBe(atBoundary ? 0 : 1);
      if (!atBoundary) expect(r.problems[0]).toMatchObject({ severity: 'warning', message: expect.stringMatching(/ends inside a record at byte \d+/) });
    }
  });

  it('skips a damaged stretch and resumes at the next intact record', () => {
    const { bytes, ends } = sampleCapture(20);
    const all = read(bytes).records;
    const damaged = bytes.slice();
    // Damage one byte in the body of record 11 (records[11] spans ends[10]..ends[11]).
    const inside = ends[10] + RECORD_HEAD_BYTES + 1;
    expect(inside).toBeLessThan(ends[11]);
    damaged[inside] ^= 0x40;
    const r = read(damaged, 13);
    expect(r.records).toEqual([...all.slice(0, 11), ...all.slice(12)]);
    expect(r.problems).toHaveLength(1);
    expect(r.problems[0].message).toMatch(new RegExp(`bytes ${ends[10]} to ${ends[11] - 1} are damaged`));
    expect(r.summary.skippedBytes).toBe(ends[11] - ends[10]);
  });

  it('a damaged length field in the last record is damage, not a cut-off end, when intact records follow', () => {
    const { bytes, ends } = sampleCapture(6);
    const all = read(bytes).records;
    const damaged = bytes.slice();
    // Record 2's length field claims a huge body; records 3.. are intact after it.
    damaged[ends[1] + 3] = 0x7f;
    const r = read(damaged);
    expect(r.records).toEqual([...all.slice(0, 2), ...all.slice(3)]);
    expect(r.summary.truncated).toBe(false);
  });

  it('rejects a file that is not a capture, and an empty one, with a message', () => {
    const csv = read(new TextEncoder().encode('go_btn,pulse\n0,1\n'));
    expect(csv.problems).toEqual([{ severity: 'error', message: expect.stringMatching(/not a Twinstep capture/), offset: 0 }]);
    expect(read(new Uint8Array(0)).problems[0].message).toMatch(/empty/);
  });

  it('rejects a header record that fails the schema, naming the field', () => {
    const bad = { ...header(), link: { port: 'x', baud: -5, clockHz: null } };
    const bytes = concat([CAPTURE_MAGIC, encodeJsonRecord('header', 0, bad)]);
    const r = read(bytes);
    expect(r.summary.usable).toBe(false);
    expect(r.problems[0].message).toMatch(/link\.baud/);
  });

  it('never throws on arbitrary bytes, with or without the magic in front', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 600 }), fc.boolean(), fc.integer({ min: 1, max: 64 }), (junk, magic, chunk) => {
        const bytes = magic ? concat([encodeCaptureStart(header()), junk]) : junk;
        const r = read(bytes, chunk);
        expect(r.summary.bytes).toBe(bytes.length);
      }),
      { numRuns: 200 },
    );
  });
});
