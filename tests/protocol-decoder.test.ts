// The streaming frame decoder: exact delivery under drops, insertions and bit flips, counters, and robustness
// against arbitrary bytes. The CRC-16 detection limits used below are spelled out where they are relied on.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { crc16 } from '../core/protocol/crc';
import { cobsEncode } from '../core/protocol/cobs';
import { FrameDecoder, type DecodedEvent } from '../core/protocol/decoder';
import { encodeCycleFrame, encodeIdFrame, makeLayout, wireFrame, type FrameField, type FrameLayout } from '../core/protocol/frame';

type Sent = { counter: number; values: bigint[]; wire: Uint8Array };

const cycles = (events: DecodedEvent[]) => events.filter((e) => e.kind === 'cycle').map((e) => (e.kind === 'cycle' ? { counter: e.counter, values: e.values } : null));

function concat(parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

/** Push `stream` cut at the given points, collecting all events. */
function decodeChunked(decoder: FrameDecoder, stream: Uint8Array, cuts: number[]): DecodedEvent[] {
  const points = [...new Set(cuts.map((c) => c % (stream.length + 1)))].sort((a, b) => a - b);
  const events: DecodedEvent[] = [];
  let from = 0;
  for (const p of [...points, stream.length]) {
    events.push(...decoder.push(stream.subarray(from, p)));
    from = p;
  }
  return events;
}

const fieldsArb = fc.array(fc.integer({ min: 1, max: 64 }), { minLength: 1, maxLength: 6 }).map((ws) => ws.map((width, i): FrameField => ({ name: `f${i}`, width })));

function frameArb(layout: FrameLayout, count: number): fc.Arbitrary<Sent[]> {
  const valuesArb = fc.tuple(...layout.fields.map((f) => fc.bigInt({ min: 0n, max: (1n << BigInt(f.width)) - 1n })));
  return fc.array(valuesArb, { minLength: 1, maxLength: count, size: 'max' }).map((rows) => rows.map((values, i) => ({ counter: i % 128, values, wire: encodeCycleFrame(layout, i, values) })));
}

/** Positions of COBS code bytes in a wire frame (the first byte, then wherever each run says the next starts). */
function codePositions(wire: Uint8Array): Set<number> {
  const at = new Set<number>();
  for (let p = 0; p < wire.length - 1; p += wire[p]) at.add(p);
  return at;
}

/**
 * Damage applied to one frame. The classes are chosen so that every damaged segment either has a length no
 * valid frame has (after COBS decoding), or has the frame's length with at most 3 flipped bits in data bytes:
 * CRC-16 with polynomial 0x1021 has Hamming distance 4 for messages up to 32751 bits (Koopman's CRC
 * polynomial tables; quoted from memory), so such frames are always rejected. Flips of COBS code bytes and
 * zero bytes inserted inside a frame can rebuild a frame of the right length with scattered errors, which a
 * 16-bit CRC misses with probability 2^-16; they are covered by the unrestricted test further down instead.
 */
type Damage =
  | { kind: 'none' }
  | { kind: 'drop' }
  | { kind: 'delete'; at: number; count: number }
  | { kind: 'insert'; at: number; bytes: number[] }
  | { kind: 'flip'; bits: number[] }
  | { kind: 'garbage'; bytes: number[] };

const damageArb: fc.Arbitrary<Damage> = fc.oneof(
  { weight: 12, arbitrary: fc.constant<Damage>({ kind: 'none' }) },
  { weight: 1, arbitrary: fc.constant<Damage>({ kind: 'drop' }) },
  { weight: 1, arbitrary: fc.record({ kind: fc.constant('delete' as const), at: fc.nat(), count: fc.integer({ min: 1, max: 6 }) }) },
  { weight: 1, arbitrary: fc.record({ kind: fc.constant('insert' as const), at: fc.nat(), bytes: fc.array(fc.integer({ min: 1, max: 255 }), { minLength: 1, maxLength: 6 }) }) },
  { weight: 1, arbitrary: fc.record({ kind: fc.constant('flip' as const), bits: fc.array(fc.nat(), { minLength: 1, maxLength: 3 }) }) },
  { weight: 1, arbitrary: fc.record({ kind: fc.constant('garbage' as const), bytes: fc.array(fc.nat(255), { minLength: 1, maxLength: 60 }) }) },
);

/** Apply one damage to a frame's wire bytes; `maxGarbage` keeps pure-garbage segments shorter than a frame. */
function damageFrame(wire: Uint8Array, d: Damage, maxGarbage: number): Uint8Array {
  const seg = wire.length - 1; // bytes before the delimiter
  switch (d.kind) {
    case 'none':
      return wire;
    case 'drop':
      return new Uint8Array(0);
    case 'delete': {
      const at = d.at % seg;
      const count = Math.min(d.count, seg - at);
      return concat([wire.subarray(0, at), wire.subarray(at + count)]);
    }
    case 'insert': {
      const at = d.at % (seg + 1);
      return concat([wire.subarray(0, at), new Uint8Array(d.bytes), wire.subarray(at)]);
    }
    case 'flip': {
      const codes = codePositions(wire);
      const targets = [...Array(wire.length).keys()].filter((p) => !codes.has(p));
      const out = wire.slice();
      const used = new Set<number>();
      for (const b of d.bits) {
        const bit = b % (targets.length * 8);
        if (used.has(bit)) continue;
        used.add(bit);
        out[targets[bit >> 3]] ^= 1 << (bit & 7);
      }
      return out;
    }
    case 'garbage':
      return concat([new Uint8Array(d.bytes.slice(0, maxGarbage)), wire]);
  }
}

/** A frame arrives intact when its own bytes are untouched and a 0x00 (or the stream start) precedes it. */
function buildDamagedStream(sent: Sent[], damages: Damage[], maxGarbage: number) {
  const parts: Uint8Array[] = [];
  const intact: Sent[] = [];
  let lastByte = 0;
  sent.forEach((s, i) => {
    const d = damages[i % damages.length];
    const out = damageFrame(s.wire, d, maxGarbage);
    const same = d.kind === 'none' || (out.length === s.wire.length && out.every((b, k) => b === s.wire[k]));
    if (same && lastByte === 0) intact.push(s);
    if (d.kind === 'garbage' && out.subarray(out.length - s.wire.length).every((b, k) => b === s.wire[k]) && out[out.length - s.wire.length - 1] === 0) {
      intact.push(s); // garbage that ends in 0x00 leaves the frame after it intact
    }
    if (out.length > 0) lastByte = out[out.length - 1];
    parts.push(out);
  });
  return { stream: concat(parts), intact };
}

describe('FrameDecoder on a clean stream', () => {
  const layout = makeLayout([
    { name: 'state', width: 4 },
    { name: 'acc', width: 16 },
    { name: 'done', width: 1 },
  ]);

  it('delivers identification and cycle frames in order, byte by byte or all at once', () => {
    const id = encodeIdFrame({ fingerprint: 0x1234abcd, layoutVersion: 1, payloadBits: 21, nextCounter: 0, afterReset: true });
    const rows = [[1n, 0n, 0n], [2n, 0xffffn, 1n], [3n, 0x0100n, 0n]];
    const stream = concat([id, ...rows.map((v, i) => encodeCycleFrame(layout, i, v))]);
    for (const cut of [1, 2, 7, stream.length]) {
      const d = new FrameDecoder(layout, { expectedFingerprint: 0x1234abcd });
      const events = decodeChunked(d, stream, Array.from({ length: Math.ceil(stream.length / cut) }, (_, k) => k * cut));
      expect(events.map((e) => e.kind)).toEqual(['id', 'cycle', 'cycle', 'cycle']);
      expect(events[0]).toMatchObject({ kind: 'id', info: { fingerprint: 0x1234abcd, payloadBits: 21, afterReset: true, nextCounter: 0 } });
      expect(events[0]).not.toHaveProperty('mismatch');
      expect(cycles(events)).toEqual(rows.map((values, i) => ({ counter: i, values })));
      expect(d.stats).toMatchObject({ cycleFrames: 3, idFrames: 1, crcErrors: 0, framingErrors: 0, droppedFrames: 0, idMismatches: 0, bytes: stream.length });
    }
  });

  it('counts gaps modulo the 7-bit counter, across the wrap', () => {
    const v = [0n, 0n, 0n];
    const counters = [125, 126, 127, 0, 1, 4, 127, 2];
    const d = new FrameDecoder(layout);
    const events = d.push(concat(counters.map((c) => encodeCycleFrame(layout, c, v))));
    const gaps = events.filter((e) => e.kind === 'gap');
    expect(gaps).toEqual([
      { kind: 'gap', missing: 2, expected: 2, got: 4, offset: expect.any(Number) },
      { kind: 'gap', missing: 122, expected: 5, got: 127, offset: expect.any(Number) },
      { kind: 'gap', missing: 2, expected: 0, got: 2, offset: expect.any(Number) },
    ]);
    expect(d.stats.droppedFrames).toBe(126);
  });

  it('takes the counter from identification frames: a reset restarts it, a periodic one checks it', () => {
    const v = [0n, 0n, 0n];
    const id = (nextCounter: number, afterReset: boolean) => encodeIdFrame({ fingerprint: 7, layoutVersion: 1, payloadBits: 21, nextCounter, afterReset });
    const d = new FrameDecoder(layout);
    const events = d.push(concat([encodeCycleFrame(layout, 40, v), id(0, true), encodeCycleFrame(layout, 0, v), id(3, false), encodeCycleFrame(layout, 3, v)]));
    expect(events.filter((e) => e.kind === 'gap')).toEqual([{ kind: 'gap', missing: 2, expected: 1, got: 3, offset: expect.any(Number) }]);
    expect(d.stats).toMatchObject({ droppedFrames: 2, idFrames: 2, cycleFrames: 3 });
  });

  it('reports identification mismatches: fingerprint, layout version, payload width', () => {
    const d = new FrameDecoder(layout, { expectedFingerprint: 0xcafef00d });
    const events = d.push(concat([
      encodeIdFrame({ fingerprint: 0xcafef00d, layoutVersion: 1, payloadBits: 21, nextCounter: 0, afterReset: true }),
      encodeIdFrame({ fingerprint: 0xcafef00e, layoutVersion: 1, payloadBits: 21, nextCounter: 0, afterReset: true }),
      encodeIdFrame({ fingerprint: 0xcafef00d, layoutVersion: 2, payloadBits: 20, nextCounter: 0, afterReset: true }),
    ]));
    expect(events.map((e) => (e.kind === 'id' ? e.mismatch ?? 'ok' : e.kind))).toEqual([
      'ok',
      'fingerprint 0xcafef00e is not the expected 0xcafef00d (the board runs another design)',
      'layout version 2 is not 1; payload of 20 bits is not the expected 21',
    ]);
    expect(d.stats.idMismatches).toBe(2);
  });

  it('names what is wrong with a bad frame and where it starts', () => {
    const good = encodeCycleFrame(layout, 0, [1n, 2n, 0n]);
    const flipped = good.slice();
    flipped[2] ^= 0x10;
    const shortRaw = new Uint8Array([1, 2, 3, 4]);
    const badHeaderRaw = new Uint8Array([0x81, 1, 2, 3, 0, 0]);
    const c = crc16(badHeaderRaw, 0, 4);
    badHeaderRaw[4] = c >>> 8;
    badHeaderRaw[5] = c & 0xff;
    const stream = concat([good, flipped, wireFrame(shortRaw), new Uint8Array([0x05, 0x01, 0x00]), wireFrame(badHeaderRaw), good]);
    const d = new FrameDecoder(layout);
    const events = d.push(stream);
    const errors = events.filter((e) => e.kind === 'error');
    expect(errors.map((e) => e.kind === 'error' && e.error)).toEqual(['crc', 'length', 'cobs', 'header']);
    expect(errors[0]).toMatchObject({ offset: good.length, message: expect.stringMatching(/^frame at stream byte 8: CRC mismatch \(received 0x[0-9a-f]{4}, computed 0x[0-9a-f]{4}\)$/) });
    expect(errors[1].kind === 'error' && errors[1].message).toContain('frame of 4 bytes; expected 6 (cycle) or 11 (identification)');
    expect(errors[2].kind === 'error' && errors[2].message).toContain('past the end');
    expect(errors[3].kind === 'error' && errors[3].message).toContain('header 0x81');
    expect(d.stats).toMatchObject({ crcErrors: 1, framingErrors: 3, cycleFrames: 2 });
  });

  it('tells the kinds apart by header when a cycle frame is as long as an identification frame', () => {
    // 64 payload bits: 1 + 8 + 2 = 11 raw bytes, the identification frame's length.
    const wide = makeLayout([{ name: 'w', width: 64 }]);
    const d = new FrameDecoder(wide);
    const events = d.push(concat([
      encodeIdFrame({ fingerprint: 1, layoutVersion: 1, payloadBits: 64, nextCounter: 0, afterReset: true }),
      encodeCycleFrame(wide, 0, [0x8000_0000_0000_0001n]),
    ]));
    expect(events.map((e) => e.kind)).toEqual(['id', 'cycle']);
    expect(cycles(events)).toEqual([{ counter: 0, values: [0x8000_0000_0000_0001n] }]);
  });

  it('skips an endless run without a delimiter once, then resynchronises', () => {
    const d = new FrameDecoder(layout);
    const events = d.push(concat([new Uint8Array(1000).fill(0x55), new Uint8Array([0]), encodeCycleFrame(layout, 9, [1n, 1n, 1n])]));
    expect(events.map((e) => (e.kind === 'error' ? e.error : e.kind))).toEqual(['overlong', 'cycle']);
  });

  it('can wait for the first delimiter when joining a stream mid-frame', () => {
    const frame = encodeCycleFrame(layout, 3, [1n, 1n, 1n]);
    const joined = concat([frame.subarray(3), frame]);
    expect(new FrameDecoder(layout).push(joined).map((e) => e.kind)).toEqual(['error', 'cycle']);
    expect(new FrameDecoder(layout, { waitForDelimiter: true }).push(joined).map((e) => e.kind)).toEqual(['cycle']);
  });
});

describe('FrameDecoder under damage (fast-check)', () => {
  it('delivers exactly the intact frames, once and in order, and counts the lost ones as dropped', () => {
    fc.assert(
      fc.property(
        fieldsArb.chain((fields) => {
          const layout = makeLayout(fields);
          return fc.record({
            layout: fc.constant(layout),
            sent: frameArb(layout, 300),
            damages: fc.array(damageArb, { minLength: 1, maxLength: 40, size: 'max' }),
            cuts: fc.array(fc.nat(), { maxLength: 30 }),
          });
        }),
        ({ layout, sent, damages, cuts }) => {
          // Garbage up to the raw frame length: a segment made only of garbage then decodes shorter than a frame.
          const maxGarbage = layout.payloadBytes + 3;
          const { stream, intact } = buildDamagedStream(sent, damages, maxGarbage);
          const decoder = new FrameDecoder(layout);
          const events = decodeChunked(decoder, stream, cuts);
          expect(cycles(events)).toEqual(intact.map((s) => ({ counter: s.counter, values: s.values })));
          // Every frame between the first and last delivered one that did not arrive is a drop (runs < 128).
          if (intact.length > 0) {
            const first = sent.indexOf(intact[0]);
            const last = sent.indexOf(intact[intact.length - 1]);
            expect(decoder.stats.droppedFrames).toBe(last - first + 1 - intact.length);
          }
          // Garbage between frames is itself a bad segment (a framing error) unless it is only delimiters,
          // so the no-error expectation holds only when no frame was damaged and no garbage was added.
          const damagedFrames = sent.length - intact.length;
          const garbageAdded = damages.some((d) => d.kind === 'garbage');
          if (damagedFrames === 0 && !garbageAdded) expect(decoder.stats.crcErrors + decoder.stats.framingErrors).toBe(0);
        },
      ),
      { numRuns: 300 },
    );
  });

  it('delivers every intact frame even under unrestricted damage, and never throws', () => {
    // Here corrupted frames may, with CRC-16's 2^-16 odds, get through; only the guaranteed half is checked:
    // intact frames (untouched and preceded by 0x00) are all delivered, in order.
    const anyDamage: fc.Arbitrary<Damage> = fc.oneof(
      damageArb,
      fc.record({ kind: fc.constant('insert' as const), at: fc.nat(), bytes: fc.array(fc.nat(255), { minLength: 1, maxLength: 40 }) }),
      fc.record({ kind: fc.constant('delete' as const), at: fc.nat(), count: fc.integer({ min: 1, max: 300 }) }),
    );
    fc.assert(
      fc.property(
        fieldsArb.chain((fields) => {
          const layout = makeLayout(fields);
          return fc.record({ layout: fc.constant(layout), sent: frameArb(layout, 80), damages: fc.array(anyDamage, { minLength: 1, maxLength: 20 }), cuts: fc.array(fc.nat(), { maxLength: 20 }) });
        }),
        ({ layout, sent, damages, cuts }) => {
          const { stream, intact } = buildDamagedStream(sent, damages, 10_000);
          const got = cycles(decodeChunked(new FrameDecoder(layout), stream, cuts));
          let k = 0;
          for (const g of got) if (k < intact.length && g!.counter === intact[k].counter && g!.values.every((v, i) => v === intact[k].values[i])) k++;
          expect(k).toBe(intact.length);
        },
      ),
      { numRuns: 200 },
    );
  });

  it('rejects every single-bit flip of a frame, code bytes and delimiter included (exhaustive)', () => {
    const layout = makeLayout([
      { name: 'a', width: 13 },
      { name: 'b', width: 64 },
      { name: 'c', width: 3 },
    ]);
    const frames = [
      [0n, 0n, 0n],
      [0x1fffn, 0xffff_ffff_ffff_ffffn, 7n],
      [0x0a0an, 0x0000_ff00_0000_00ffn, 2n],
    ].map((values, i) => ({ counter: i + 1, values, wire: encodeCycleFrame(layout, i + 1, values) }));
    const before = encodeCycleFrame(layout, 0, [1n, 1n, 1n]);
    for (const f of frames) {
      const after = encodeCycleFrame(layout, f.counter + 1, [5n, 5n, 5n]);
      for (let bit = 0; bit < f.wire.length * 8; bit++) {
        const bad = f.wire.slice();
        bad[bit >> 3] ^= 1 << (bit & 7);
        const got = cycles(new FrameDecoder(layout).push(concat([before, bad, after])));
        const delimiterHit = bit >> 3 === f.wire.length - 1;
        expect(got.map((g) => g!.counter), `bit ${bit}`).toEqual(delimiterHit ? [0] : [0, f.counter + 1]);
      }
    }
  });

  it('never throws on arbitrary bytes in arbitrary chunks, and accounts for every byte', () => {
    fc.assert(
      fc.property(fieldsArb, fc.array(fc.uint8Array({ maxLength: 400 }), { maxLength: 12 }), fc.boolean(), (fields, chunks, wait) => {
        const d = new FrameDecoder(makeLayout(fields), { waitForDelimiter: wait, expectedFingerprint: 1 });
        let total = 0;
        for (const c of chunks) {
          const events = d.push(c);
          total += c.length;
          for (const e of events) if (e.kind === 'error') expect(e.message).toMatch(/^frame at stream byte \d+: /);
        }
        expect(d.stats.bytes).toBe(total);
      }),
    );
    const d = new FrameDecoder(makeLayout([{ name: 'x', width: 1 }]));
    expect(() => d.push(undefined as unknown as Uint8Array)).not.toThrow();
    expect(() => d.push(cobsEncode(new Uint8Array(300)))).not.toThrow();
  });
});
