// CRC-16/IBM-3740 checked against the published catalogue and against Python's binascii.crc_hqx.
// Both the table-driven and the bitwise forms must agree with the outside references.
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import fc from 'fast-check';
import { CRC16_PARAMS, crc16, crc16Bitwise, crc16Update } from '../core/protocol/crc';

const ascii = (s: string) => new TextEncoder().encode(s);

describe('CRC-16/IBM-3740', () => {
  it('matches the catalogue check value for "123456789"', () => {
    // Greg Cook, "Catalogue of parametrised CRC algorithms", entry CRC-16/IBM-3740 (alias CRC-16/CCITT-FALSE):
    // width=16 poly=0x1021 init=0xffff refin=false refout=false xorout=0x0000 check=0x29b1 residue=0x0000.
    // Quoted from memory; binascii.crc_hqx below confirms the check value independently.
    expect(crc16(ascii('123456789'))).toBe(0x29b1);
    expect(crc16Bitwise(ascii('123456789'))).toBe(0x29b1);
    expect(CRC16_PARAMS).toMatchObject({ poly: 0x1021, init: 0xffff, refin: false, refout: false, xorout: 0 });
  });

  it('leaves the catalogue residue 0x0000 after a message followed by its CRC, high byte first', () => {
    // Same catalogue entry: residue=0x0000 (from memory). With xorout 0 and no reflection the register
    // after message+CRC is exactly the residue.
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 300 }), (msg) => {
        const c = crc16(msg);
        const whole = new Uint8Array([...msg, c >>> 8, c & 0xff]);
        expect(crc16(whole)).toBe(CRC16_PARAMS.residue);
      }),
    );
  });

  it('gives the initial value for an empty message (Williams parameter model: crc = init ^ xorout)', () => {
    // Ross Williams, "A Painless Guide to CRC Error Detection Algorithms" (1993), the parametrised model the
    // catalogue uses: no message bits means no division steps.
    expect(crc16(new Uint8Array(0))).toBe(0xffff);
    expect(crc16Bitwise(new Uint8Array(0))).toBe(0xffff);
  });

  it('agrees with Python binascii.crc_hqx (the same polynomial, unreflected) on random messages', () => {
    // Outside reference: CPython's binascii.crc_hqx(data, 0xFFFF) computes CRC-16/IBM-3740.
    const msgs = fc.sample(fc.uint8Array({ maxLength: 200 }), { numRuns: 200, seed: 12345 });
    const script = 'import sys,binascii\nfor line in sys.stdin:\n  print(binascii.crc_hqx(bytes.fromhex(line.strip()),0xFFFF))\n';
    const input = msgs.map((m) => Buffer.from(m).toString('hex')).join('\n') + '\n';
    const run = spawnSync('python3', ['-c', script], { input, encoding: 'utf8' });
    expect(run.error, 'python3 (Debian) is required for this cross-check').toBeUndefined();
    expect(run.status, run.stderr).toBe(0);
    const theirs = run.stdout.trim().split('\n').map(Number);
    expect(theirs).toHaveLength(msgs.length);
    msgs.forEach((m, i) => {
      expect(crc16(m)).toBe(theirs[i]);
      expect(crc16Bitwise(m)).toBe(theirs[i]);
    });
  });

  it('shifts left by 8 when fed its own high byte (the hardware sends the CRC this way)', () => {
    // Follows from the update rule r' = (r << 8) ^ T[(r >> 8) ^ byte] with T[0] = 0; checked for every register value.
    for (let r = 0; r < 0x10000; r++) {
      const next = crc16Update(r, new Uint8Array([r >>> 8]));
      if (next !== ((r << 8) & 0xffff)) expect.fail(`register 0x${r.toString(16)} gave 0x${next.toString(16)}`);
    }
  });

  it('can be continued across chunk boundaries', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 100 }), fc.nat(100), (msg, cut) => {
        const k = Math.min(cut, msg.length);
        expect(crc16Update(crc16Update(0xffff, msg, 0, k), msg, k)).toBe(crc16(msg));
      }),
    );
  });
});
