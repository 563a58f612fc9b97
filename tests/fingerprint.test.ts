// Design fingerprints: SHA-256 (FIPS 180-4) of the canonical IR. The hash itself comes from
// @noble/hashes; here we check it against the standard's test vector and check what the
// canonical form includes and leaves out.
import { sha256 } from '@noble/hashes/sha2.js';
import { bytesToHex, utf8ToBytes } from '@noble/hashes/utils.js';
import { describe, expect, it } from 'vitest';
import { fingerprint, fingerprint32 } from '../core/ir/fingerprint';
import { checkText, loadFixture } from './support/load';

describe('design fingerprint', () => {
  it('uses SHA-256 as specified: FIPS 180-2 Appendix B.1 vector for "abc"', () => {
    expect(bytesToHex(sha256(utf8ToBytes('abc')))).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });

  it('ignores comments, blank lines and layout, but not a semantic change', () => {
    const { text } = loadFixture('tank_dosing');
    const base = fingerprint(checkText(text).machine!);
    const relaid = text.replace(/--.*$/gm, '').replace(/\n\n+/g, '\n').replace(/ +/g, ' ');
    expect(fingerprint(checkText(relaid).machine!)).toBe(base);
    const changed = text.replace('poured <- poured + 1', 'poured <- poured + 2');
    expect(fingerprint(checkText(changed).machine!)).not.toBe(base);
    expect(fingerprint32(checkText(text).machine!)).toBe(parseInt(base.slice(0, 8), 16));
  });
});
