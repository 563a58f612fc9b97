// The fast paths behind replay throughput, held to the plain implementations they replace:
// - StreamDecoder must report exactly what core/protocol's FrameDecoder reports (that decoder is checked
//   against the protocol document's worked examples and published CRC/COBS vectors in its own tests);
// - the generated comparison kernel must flag a frame exactly when the bigint reference interpreter
//   finds a difference, on random machines and random frames (illegal state codes included).
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { FrameDecoder, type DecodedEvent } from '../core/protocol/decoder';
import { encodeCycleFrame, encodeIdFrame, LAYOUT_VERSION, makeLayout, unpackFields, type FrameLayout } from '../core/protocol/frame';
import { StreamDecoder } from '../core/decode/stream';
import { compileKernel, KERNEL_MISMATCH } from '../core/compare/kernel';
import { probeMap, readBig } from '../core/compare/probe-map';
import { frameValues, referenceModel, type Basis } from '../core/compare/reference';
import { SeededRandom } from '../core/util/prng';
import { prepared } from './compare-frames';
import { randomMachine } from './support/random-machine';

function fastEvents(layout: FrameLayout, chunks: Uint8Array[], fingerprint?: number) {
  const events: DecodedEvent[] = [];
  const d = new StreamDecoder(
    layout,
    {
      cycle: (counter, raw, offset) => events.push({ kind: 'cycle', counter, values: unpackFields(layout, raw, 1), offset }),
      id: (info, mismatch, offset) => events.push(mismatch ? { kind: 'id', info, mismatch, offset } : { kind: 'id', info, offset }),
      gap: (missing, expected, got, offset) => events.push({ kind: 'gap', missing, expected, got, offset }),
      error: (error, message, offset) => events.push({ kind: 'error', error, message, offset }),
    },
    { expectedFingerprint: fingerprint },
  );
  for (const c of chunks) d.push(c);
  return { events, stats: d.stats };
}

function plainEvents(layout: FrameLayout, chunks: Uint8Array[], fingerprint?: number) {
  const d = new FrameDecoder(layout, { expectedFingerprint: fingerprint });
  const events = chunks.flatMap((c) => d.push(c));
  return { events, stats: d.stats };
}

const piece = (layout: FrameLayout) =>
  fc.oneof(
    { weight: 6, arbitrary: fc.tuple(fc.nat(300), fc.array(fc.bigInt({ min: 0n, max: (1n << 64n) - 1n }), { minLength: layout.fields.length, maxLength: layout.fields.length })).map(([k, vs]) => encodeCycleFrame(layout, k, vs.map((v, i) => v & ((1n << BigInt(layout.fields[i].width)) - 1n)))) },
    { weight: 1, arbitrary: fc.tuple(fc.nat(127), fc.boolean(), fc.constantFrom(0xdeadbeef, 0x12345678)).map(([n, r, fp]) => encodeIdFrame({ fingerprint: fp, layoutVersion: LAYOUT_VERSION, payloadBits: layout.payloadBits, nextCounter: n, afterReset: r })) },
    { weight: 2, arbitrary: fc.uint8Array({ minLength: 1, maxLength: 30 }) },
    { weight: 1, arbitrary: fc.constant(new Uint8Array(1)) },
  );

describe('StreamDecoder agrees with FrameDecoder', () => {
  const layouts = [
    makeLayout([{ name: 'a', width: 3 }, { name: 'b', width: 17 }, { name: 'c', width: 1 }]),
    makeLayout([{ name: 'x', width: 64 }, { name: 'y', width: 33 }, { name: 'z', width: 2 }]),
    makeLayout([{ name: 'w', width: 1 }]),
  ];
  for (const layout of layouts) {
    it(`events, offsets and statistics match on mixed and damaged streams (${layout.payloadBits} payload bits)`, () => {
      fc.assert(
        fc.property(fc.array(piece(layout), { maxLength: 40 }), fc.array(fc.integer({ min: 1, max: 50 }), { minLength: 1, maxLength: 8 }), fc.boolean(), (pieces, cuts, withFp) => {
          const stream = new Uint8Array(pieces.reduce((n, p) => n + p.length, 0));
          let at = 0;
          for (const p of pieces) {
            stream.set(p, at);
            at += p.length;
          }
          const chunks: Uint8Array[] = [];
          for (let i = 0, o = 0; o < stream.length; i++) {
            chunks.push(stream.subarray(o, o + cuts[i % cuts.length]));
            o += cuts[i % cuts.length];
          }
          const fp = withFp ? 0xdeadbeef : undefined;
          const a = fastEvents(layout, chunks, fp);
          const b = plainEvents(layout, chunks, fp);
          expect(a.events).toEqual(b.events);
          expect(a.stats).toEqual(b.stats);
        }),
        { numRuns: 300 },
      );
    });
  }

  it('never throws on arbitrary bytes', () => {
    const layout = layouts[0];
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 2000 }), (bytes) => {
        const a = fastEvents(layout, [bytes]);
        expect(a.stats.bytes).toBe(bytes.length);
      }),
    );
  });
});

describe('the comparison kernel agrees with the reference interpreter', () => {
  it('on random machines, frame pairs agree or disagree in the same way', () => {
    const outcomes = { agree: 0, differ: 0 };
    for (let seed = 1; seed <= 30; seed++) {
      const m = randomMachine(seed, { maxStates: 4, depth: 2 });
      const d = prepared(m, []);
      const pm = probeMap(m, d.syn, d.layout);
      if (!pm.ok) throw new Error(pm.error);
      const kernel = compileKernel(m, d.layout.frame, pm.map);
      const ref = referenceModel(m, pm.map);
      const rnd = new SeededRandom(seed * 7919);
      const legalCodes = d.syn.encoding.codes.map((c) => BigInt(parseInt(c, 2)));
      let prev: bigint[] | null = null;
      for (let k = 0; k < 300; k++) {
        // Mostly frames that follow the model from the previous one (so agreement is common), some random.
        const follow = prev && ref.stateOf(prev) >= 0 && rnd.below(3) > 0;
        let values = d.layout.fields.map((f) => rnd.bits(f.width));
        if (rnd.below(5) > 0) values[pm.map.state] = legalCodes[rnd.below(legalCodes.length)];
        if (follow && prev) {
          const exp = ref.expect({ kind: 'frame', values: prev }, values);
          values = values.map((v, i) => (exp.expected[i] !== null && d.layout.fields[i].kind !== 'status' && d.layout.fields[i].kind !== 'output' ? exp.expected[i]! : v));
          const here = ref.expect({ kind: 'frame', values: prev }, values);
          if (rnd.below(2)) values = values.map((v, i) => (here.expected[i] !== null && (d.layout.fields[i].kind === 'status' || d.layout.fields[i].kind === 'output') ? here.expected[i]! : v));
        }
        // The kernel reads raw frame bytes (header, LSB-first payload as docs/probe-protocol.md packs it).
        const rawFrame = new Uint8Array(1 + d.layout.frame.payloadBytes + 2);
        rawFrame[0] = k % 128;
        const packed = unpackFields(d.layout.frame, new Uint8Array([0, ...packBytes(d.layout.frame, values)]), 1);
        expect(packed).toEqual(values);
        rawFrame.set(packBytes(d.layout.frame, values), 1);
        const basis: Basis = prev && ref.stateOf(prev) >= 0 ? { kind: 'frame', values: prev } : { kind: 'none' };
        const exp = ref.expect(basis, frameValues(d.layout.frame, rawFrame));
        const differs = exp.expected.some((e, i) => e !== null && e !== values[i]) || ref.stateOf(values) < 0;
        const flags = kernel.check(rawFrame);
        expect({ seed, k, flagged: (flags & KERNEL_MISMATCH) !== 0 || (flags & 2) !== 0 }).toEqual({ seed, k, flagged: differs });
        outcomes[differs ? 'differ' : 'agree']++;
        prev = values;
        if (ref.stateOf(values) < 0) prev = null;
        // Keep readBig honest against unpackFields on the same bytes.
        d.layout.frame.fields.forEach((f, i) => expect(readBig(rawFrame, d.layout.frame.offsets[i], f.width)).toBe(values[i]));
      }
    }
    // Both outcomes must be well represented, or the test shows nothing.
    expect(outcomes.agree).toBeGreaterThan(1000);
    expect(outcomes.differ).toBeGreaterThan(1000);
  });
});

function packBytes(layout: FrameLayout, values: bigint[]): Uint8Array {
  let word = 0n;
  for (let i = layout.fields.length - 1; i >= 0; i--) word = (word << BigInt(layout.fields[i].width)) | values[i];
  const out = new Uint8Array(layout.payloadBytes);
  for (let k = 0; k < out.length; k++) out[k] = Number((word >> BigInt(8 * k)) & 0xffn);
  return out;
}
