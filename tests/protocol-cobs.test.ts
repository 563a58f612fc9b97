// COBS (Cheshire and Baker, "Consistent Overhead Byte Stuffing", IEEE/ACM Transactions on Networking, 1999)
// checked against its widely reproduced examples and by round-trip properties.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { cobsDecode, cobsEncode } from '../core/protocol/cobs';
import { COBS_PUBLISHED as PUBLISHED } from './protocol-vectors';


describe('COBS', () => {
  for (const ex of PUBLISHED) {
    it(`encodes and decodes the published example ${ex.name}`, () => {
      expect([...cobsEncode(new Uint8Array(ex.data))]).toEqual(ex.encoded);
      const back = cobsDecode(new Uint8Array(ex.encoded));
      expect(back.ok && [...back.data]).toEqual(ex.data);
    });
  }

  it('round-trips any data and never emits 0x00', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 1200 }), (data) => {
        const enc = cobsEncode(data);
        expect(enc.includes(0)).toBe(false);
        const dec = cobsDecode(enc);
        expect(dec.ok).toBe(true);
        if (dec.ok) expect([...dec.data]).toEqual([...data]);
      }),
    );
  });

  it('round-trips zero-heavy data and long non-zero runs', () => {
    const zeroHeavy = fc.array(fc.constantFrom(0, 0, 0, 1, 0xff), { maxLength: 600 }).map((a) => new Uint8Array(a));
    const longRuns = fc.array(fc.integer({ min: 1, max: 255 }), { minLength: 250, maxLength: 800 }).map((a) => new Uint8Array(a));
    fc.assert(
      fc.property(fc.oneof(zeroHeavy, longRuns), (data) => {
        const dec = cobsDecode(cobsEncode(data));
        expect(dec.ok && [...dec.data]).toEqual([...data]);
      }),
    );
  });

  it('keeps within the paper\'s overhead bound of one byte per 254 (at least one code byte)', () => {
    // Cheshire and Baker: worst-case overhead ceil(n/254) bytes (quoted from memory); the empty
    // message still needs its one code byte.
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 2000 }), (data) => {
        const bound = Math.max(1, Math.ceil(data.length / 254));
        expect(cobsEncode(data).length - data.length).toBeLessThanOrEqual(bound);
      }),
    );
  });

  it('reports malformed input with a position instead of throwing', () => {
    const cases: Array<[number[], string, number]> = [
      [[], 'empty', 0],
      [[0x03, 0x11], 'past the end', 0],
      [[0x03, 0x11, 0x00], '0x00', 2],
      [[0x02, 0x11, 0x00], '0x00', 2],
    ];
    for (const [bytes, text, at] of cases) {
      const r = cobsDecode(new Uint8Array(bytes));
      expect(r.ok).toBe(false);
      if (!r.ok) {
        expect(r.message).toContain(text);
        expect(r.at).toBe(at);
      }
    }
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 300 }), (junk) => {
        expect(() => cobsDecode(junk)).not.toThrow();
      }),
    );
  });
});
