// Frame format: field packing, cycle and identification frames, checked against worked examples whose CRC
// comes from an outside tool (CPython's binascii.crc_hqx) and against the documented packing rule.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  encodeCycleFrame,
  encodeIdFrame,
  FrameLayoutError,
  layoutProblems,
  makeLayout,
  MAX_PAYLOAD_BITS,
  packFields,
  rawCycleFrame,
  unpackFields,
  wireCycleFrameLength,
  type FrameField,
} from '../core/protocol/frame';

const hex = (bytes: Uint8Array) => [...bytes].map((b) => b.toString(16).padStart(2, '0')).join(' ');

/** Random field lists within the limits (1..64 bits per field). */
const fieldsArb = fc.array(fc.integer({ min: 1, max: 64 }), { minLength: 1, maxLength: 12 }).map((ws) => ws.map((width, i): FrameField => ({ name: `f${i}`, width })));
const layoutAndValues = fieldsArb.chain((fields) =>
  fc.tuple(fc.constant(fields), fc.tuple(...fields.map((f) => fc.bigInt({ min: 0n, max: (1n << BigInt(f.width)) - 1n })))),
);

describe('field packing', () => {
  it('packs a worked example LSB-first as documented', () => {
    // state:3 = 6, count:8 = 0xA5, busy:1 = 1, level:12 = 0x0F0 -> word {level,busy,count,state} = 0xF0D2E,
    // worked by hand: 0x0F0<<12 | 1<<11 | 0xA5<<3 | 6; bytes little-endian 2E 0D 0F.
    const fields = [
      { name: 'state', width: 3 },
      { name: 'count', width: 8 },
      { name: 'busy', width: 1 },
      { name: 'level', width: 12 },
    ];
    expect(hex(packFields(fields, [6n, 0xa5n, 1n, 0x0f0n]))).toBe('2e 0d 0f');
    expect(unpackFields(fields, new Uint8Array([0x2e, 0x0d, 0x0f]))).toEqual([6n, 0xa5n, 1n, 0x0f0n]);
  });

  it('equals the Verilog concatenation {f_n-1, ..., f_0} read as a little-endian byte string', () => {
    // Oracle: the concatenation written out as a binary string, the way the Verilog probe forms its payload bus.
    fc.assert(
      fc.property(layoutAndValues, ([fields, values]) => {
        const bits = fields.map((f, i) => values[i].toString(2).padStart(f.width, '0')).reverse().join('');
        const padded = bits.padStart(Math.ceil(bits.length / 8) * 8, '0');
        const expected: number[] = [];
        for (let end = padded.length; end > 0; end -= 8) expected.push(parseInt(padded.slice(end - 8, end), 2));
        expect([...packFields(fields, values)]).toEqual(expected);
      }),
    );
  });

  it('round-trips through unpackFields', () => {
    fc.assert(
      fc.property(layoutAndValues, ([fields, values]) => {
        expect(unpackFields(fields, packFields(fields, values))).toEqual(values);
      }),
    );
  });

  it('rejects bad field lists and values with messages naming the field', () => {
    expect(layoutProblems([])).toEqual(['frame layout: at least one field is needed']);
    expect(layoutProblems([{ name: 'a', width: 0 }])[0]).toContain("field 0 'a': width must be an integer from 1 to 64");
    expect(layoutProblems([{ name: 'a', width: 65 }])[0]).toContain('got 65');
    expect(layoutProblems([{ name: 'a', width: 1 }, { name: 'a', width: 2 }])[0]).toContain("field 1 'a': name used twice");
    expect(layoutProblems([{ name: '', width: 2 }])[0]).toContain('non-empty');
    const wide = Array.from({ length: 32 }, (_, i) => ({ name: `w${i}`, width: 64 }));
    expect(layoutProblems(wide)[0]).toContain(`exceeds the ${MAX_PAYLOAD_BITS}-bit limit`);
    expect(() => makeLayout([{ name: 'a', width: 1.5 }])).toThrow(FrameLayoutError);
    expect(() => packFields([{ name: 'flag', width: 1 }], [2n])).toThrow("field 'flag' is not a 1-bit pattern");
    expect(() => packFields([{ name: 'flag', width: 1 }], [-1n])).toThrow("field 'flag'");
    expect(() => packFields([{ name: 'flag', width: 1 }], [])).toThrow('1 fields but 0 values');
  });
});

describe('frames', () => {
  const layout = makeLayout([
    { name: 'state', width: 3 },
    { name: 'count', width: 8 },
    { name: 'busy', width: 1 },
    { name: 'level', width: 12 },
  ]);

  it('encodes a worked cycle frame byte for byte', () => {
    // Raw frame 05 | 2E 0D 00 | CRC. CRC = 0xD31E from CPython binascii.crc_hqx(bytes([5,0x2e,0x0d,0]), 0xFFFF),
    // an outside implementation of CRC-16/IBM-3740. COBS by hand: runs [05 2E 0D] and [D3 1E].
    expect(hex(rawCycleFrame(layout, 5, [6n, 0xa5n, 1n, 0n]))).toBe('05 2e 0d 00 d3 1e');
    expect(hex(encodeCycleFrame(layout, 5, [6n, 0xa5n, 1n, 0n]))).toBe('04 05 2e 0d 03 d3 1e 00');
    // Only the low 7 bits of the cycle count travel: 133 = 128 + 5.
    expect(hex(encodeCycleFrame(layout, 133, [6n, 0xa5n, 1n, 0n]))).toBe('04 05 2e 0d 03 d3 1e 00');
    expect(wireCycleFrameLength(layout)).toBe(8);
  });

  it('encodes a worked identification frame byte for byte', () => {
    // 80 | version 01 | fingerprint DE AD BE EF | 24 bits = 00 18 | after-reset flag + counter 0 = 80 | CRC.
    // CRC = 0x965E from CPython binascii.crc_hqx over the first nine bytes with init 0xFFFF.
    const wire = encodeIdFrame({ fingerprint: 0xdeadbeef, layoutVersion: 1, payloadBits: 24, nextCounter: 0, afterReset: true });
    expect(hex(wire)).toBe('07 80 01 de ad be ef 05 18 80 96 5e 00');
  });

  it('costs payload + 5 bytes on the wire for every payload size up to the limit', () => {
    fc.assert(
      fc.property(layoutAndValues, ([fields, values]) => {
        const l = makeLayout(fields);
        const wire = encodeCycleFrame(l, 0, values);
        expect(wire.length).toBe(l.payloadBytes + 5);
        expect(wire.indexOf(0)).toBe(wire.length - 1);
      }),
    );
  });

  it('rejects bad counters and identification values with a message', () => {
    expect(() => encodeCycleFrame(layout, -1, [0n, 0n, 0n, 0n])).toThrow('cycle counter');
    expect(() => encodeIdFrame({ fingerprint: 2 ** 32, layoutVersion: 1, payloadBits: 1, nextCounter: 0, afterReset: false })).toThrow('fingerprint');
    expect(() => encodeIdFrame({ fingerprint: 1, layoutVersion: 256, payloadBits: 1, nextCounter: 0, afterReset: false })).toThrow('layout version');
  });
});
