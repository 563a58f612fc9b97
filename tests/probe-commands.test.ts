// Host command framing: wire bytes against an independent CRC and COBS calculation written here, round trips
// and robustness as properties, and the CRC-16 detection guarantee for damaged commands.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  COMMAND_CRC_PARAMS,
  COMMAND_OPCODE,
  CommandDecoder,
  commandCrc,
  encodeCommand,
  encodeCommands,
  inputVector,
  rawCommand,
  tryEncodeCommand,
  type HostCommand,
  type InputVector,
} from '../core/protocol/commands';
import { cobsEncode } from '../core/protocol/cobs';
import { PROBE_OPCODES } from '../core/hdl/probe';

/**
 * CRC-16/MCRF4XX written out bit by bit from its catalogue parameters (Greg Cook's CRC catalogue: poly 0x1021,
 * init 0xFFFF, input and output reflected, xorout 0; check value 0x6F91 for "123456789", quoted from memory and
 * asserted below). Reflected means each byte enters least significant bit first into a register shifting right,
 * with the polynomial's bits reversed (0x8408).
 */
function referenceCrc(bytes: number[]): number {
  let r = 0xffff;
  for (const b of bytes) {
    for (let i = 0; i < 8; i++) {
      const low = (r ^ (b >> i)) & 1;
      r = (r >> 1) ^ (low ? 0x8408 : 0);
    }
  }
  return r;
}

/** COBS for frames shorter than 254 bytes, straight from the definition (Cheshire and Baker, 1999). */
function referenceCobs(data: number[]): number[] {
  const out: number[] = [];
  let run: number[] = [];
  for (const b of [...data, 0]) {
    if (b === 0) {
      out.push(run.length + 1, ...run);
      run = [];
    } else run.push(b);
  }
  return out;
}

const vec = inputVector([1, 1, 8, 1]); // a design with inputs of 1, 1, 8 and 1 bits: 11 bits, 2 bytes

describe('command wire format', () => {
  it('the reference CRC gives the catalogue check value, and so does the one the commands use', () => {
    const text = [...'123456789'].map((c) => c.charCodeAt(0));
    expect(referenceCrc(text)).toBe(0x6f91);
    expect(commandCrc(Uint8Array.from(text))).toBe(0x6f91);
    expect(COMMAND_CRC_PARAMS).toMatchObject({ name: 'CRC-16/MCRF4XX', poly: 0x1021, init: 0xffff, refin: true, refout: true, xorout: 0 });
  });

  it('each command is 00, COBS(opcode, arguments, CRC low, CRC high), 00, all of one length', () => {
    // The design's inputs take 2 bytes, so every command carries 2 argument bytes, unused ones 0.
    const cases: { cmd: HostCommand; body: number[] }[] = [
      { cmd: { kind: 'run' }, body: [0x01, 0, 0] },
      { cmd: { kind: 'halt' }, body: [0x02, 0, 0] },
      // Step counts are 16 bits, low byte first.
      { cmd: { kind: 'step', cycles: 0x1234 }, body: [0x03, 0x34, 0x12] },
      { cmd: { kind: 'step', cycles: 256 }, body: [0x03, 0x00, 0x01] },
      { cmd: { kind: 'reset' }, body: [0x04, 0, 0] },
      { cmd: { kind: 'host-inputs', on: true }, body: [0x05, 0, 0] },
      { cmd: { kind: 'host-inputs', on: false }, body: [0x06, 0, 0] },
      // Inputs 1,0,0xA5,1 packed LSB-first: bit0 = 1, bit1 = 0, bits 2..9 = 0xA5, bit 10 = 1 -> 0x695 -> 95 06.
      { cmd: { kind: 'inputs', values: [1n, 0n, 0xa5n, 1n] }, body: [0x07, 0x95, 0x06] },
    ];
    for (const { cmd, body } of cases) {
      const crc = referenceCrc(body);
      const raw = [...body, crc & 0xff, crc >> 8];
      expect([...rawCommand(cmd, vec)], JSON.stringify(cmd, (_, v) => (typeof v === 'bigint' ? v.toString() : v))).toEqual(raw);
      expect([...encodeCommand(cmd, vec)]).toEqual([0, ...referenceCobs(raw), 0]);
    }
    // A design with 3 input bytes gives every command 3 argument bytes; one without inputs, 2 (the step count).
    const wide = inputVector([20]);
    expect([...rawCommand({ kind: 'step', cycles: 0x1234 }, wide)].slice(0, 4)).toEqual([0x03, 0x34, 0x12, 0x00]);
    expect(rawCommand({ kind: 'run' }, wide).length).toBe(6);
    expect(rawCommand({ kind: 'run' }, inputVector([])).length).toBe(5);
  });

  it('matches the worked examples of docs/probe-protocol.md', () => {
    // CRC values worked out with the bitwise reference above: halt (02 00 00) 0x8C8B, step 256 (03 00 01) 0xC7DE.
    expect(referenceCrc([0x02, 0x00, 0x00])).toBe(0x8c8b);
    expect(referenceCrc([0x03, 0x00, 0x01])).toBe(0xc7de);
    expect([...encodeCommand({ kind: 'halt' }, vec)]).toEqual([0x00, 0x02, 0x02, 0x01, 0x03, 0x8b, 0x8c, 0x00]);
    expect([...encodeCommand({ kind: 'step', cycles: 256 }, vec)]).toEqual([0x00, 0x02, 0x03, 0x04, 0x01, 0xde, 0xc7, 0x00]);
  });

  it('opcodes are the documented ones', () => {
    // docs/probe-protocol.md, "Host commands".
    expect(COMMAND_OPCODE).toEqual({ run: 1, halt: 2, step: 3, reset: 4, hostInputsOn: 5, hostInputsOff: 6, inputs: 7 });
    // The Verilog receiver decodes the same table.
    expect(PROBE_OPCODES).toEqual(COMMAND_OPCODE);
  });

  it('refuses commands it cannot send, with a message naming the problem', () => {
    const bad: [HostCommand, RegExp][] = [
      [{ kind: 'step', cycles: 65536 }, /0 to 65535/],
      [{ kind: 'step', cycles: -1 }, /0 to 65535/],
      [{ kind: 'step', cycles: 1.5 }, /integer/],
      [{ kind: 'inputs', values: [1n, 0n] }, /4 inputs but 2 values/],
      [{ kind: 'inputs', values: [2n, 0n, 0n, 0n] }, /value 2 of input 0 is not a 1-bit pattern/],
      [{ kind: 'inputs', values: [0n, 0n, -1n, 0n] }, /input 2/],
    ];
    for (const [cmd, re] of bad) {
      const r = tryEncodeCommand(cmd, vec);
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.error).toMatch(re);
    }
  });

  it('a design without inputs has a 0-byte input vector', () => {
    const none = inputVector([]);
    expect(none.bytes).toBe(0);
    const wire = encodeCommand({ kind: 'inputs', values: [] }, none);
    const events = new CommandDecoder(none).push(wire);
    expect(events).toEqual([{ kind: 'command', command: { kind: 'inputs', values: [] }, offset: 1 }]);
  });
});

function commandArb(v: InputVector): fc.Arbitrary<HostCommand> {
  return fc.oneof(
    fc.constant<HostCommand>({ kind: 'run' }),
    fc.constant<HostCommand>({ kind: 'halt' }),
    fc.constant<HostCommand>({ kind: 'reset' }),
    fc.boolean().map((on): HostCommand => ({ kind: 'host-inputs', on })),
    fc.integer({ min: 0, max: 0xffff }).map((cycles): HostCommand => ({ kind: 'step', cycles })),
    fc.tuple(...v.widths.map((w) => fc.bigInt({ min: 0n, max: (1n << BigInt(w)) - 1n }))).map((values): HostCommand => ({ kind: 'inputs', values })),
  );
}

const vectorArb = fc.array(fc.integer({ min: 1, max: 64 }), { minLength: 1, maxLength: 8 }).map(inputVector);

describe('command decoder', () => {
  it('gets every command back, in order, from any chunking', () => {
    fc.assert(
      fc.property(
        vectorArb.chain((v) => fc.tuple(fc.constant(v), fc.array(commandArb(v), { minLength: 1, maxLength: 20 }), fc.array(fc.nat(), { maxLength: 10 }))),
        ([v, cmds, cuts]) => {
          const stream = encodeCommands(cmds, v);
          const d = new CommandDecoder(v);
          const got: HostCommand[] = [];
          let from = 0;
          for (const c of [...cuts.map((x) => x % (stream.length + 1)).sort((a, b) => a - b), stream.length]) {
            for (const e of d.push(stream.subarray(from, Math.max(from, c)))) {
              expect(e.kind).toBe('command');
              if (e.kind === 'command') got.push(e.command);
            }
            from = Math.max(from, c);
          }
          expect(got).toEqual(cmds);
        },
      ),
    );
  });

  it('never throws on arbitrary bytes, and a command after garbage still arrives (leading 0x00)', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 600 }), (garbage) => {
        const d = new CommandDecoder(vec);
        d.push(garbage);
        const events = d.push(encodeCommand({ kind: 'step', cycles: 7 }, vec));
        expect(events.filter((e) => e.kind === 'command').at(-1)).toMatchObject({ command: { kind: 'step', cycles: 7 } });
      }),
    );
  });

  it('rejects a command with 1 to 3 flipped bits', () => {
    // CRC-16 with poly 0x1021 detects every error of up to 3 bits in messages up to 32751 bits (Hamming distance 4,
    // Koopman's CRC tables; quoted from memory); reflecting the bit order does not change that. The raw frame is damaged before stuffing, so the length holds
    // and only the CRC (or a changed opcode's length rule) can catch it.
    fc.assert(
      fc.property(
        commandArb(vec),
        fc.uniqueArray(fc.nat(), { minLength: 1, maxLength: 3 }),
        (cmd, flips) => {
          const raw = rawCommand(cmd, vec);
          const bits = [...new Set(flips.map((f) => f % (raw.length * 8)))];
          for (const b of bits) raw[b >> 3] ^= 1 << (b & 7);
          const stuffed = cobsEncode(raw);
          const wire = Uint8Array.from([0, ...stuffed, 0]);
          const events = new CommandDecoder(vec).push(wire);
          expect(events.map((e) => e.kind)).toEqual(['error']);
        },
      ),
    );
  });

  it('names why a segment was ignored', () => {
    const d = new CommandDecoder(vec);
    const rawUnknown = [0x09, ...crcBytes([0x09])];
    const shortStep = [0x03, 0x01, ...crcBytes([0x03, 0x01])];
    const badCrc = [0x02, 0x00, 0x00, 0x00, 0x00];
    const ev = d.push(Uint8Array.from([0, ...referenceCobs(rawUnknown), 0, ...referenceCobs(shortStep), 0, ...referenceCobs(badCrc), 0, 5, 1, 0]));
    expect(ev.map((e) => (e.kind === 'error' ? e.message : 'command'))).toEqual([
      expect.stringMatching(/unknown opcode 0x09/),
      expect.stringMatching(/opcode 0x03 needs 5 bytes, got 4/),
      expect.stringMatching(/CRC mismatch/),
      expect.stringMatching(/COBS/),
    ]);
    expect(d.stats).toMatchObject({ commands: 0, rejected: 4 });
  });
});

/** The check word as a command carries it, low byte first. */
function crcBytes(body: number[]): number[] {
  const c = referenceCrc(body);
  return [c & 0xff, c >> 8];
}
