// A design's fingerprint: SHA-256 of the IR's canonical JSON, without source locations and file
// name, so that moving comments or renaming the file does not change it but any semantic edit does.
import { sha256 } from '@noble/hashes/sha2.js';
import { bytesToHex, utf8ToBytes } from '@noble/hashes/utils.js';
import type { Machine } from './schema';

/** Canonical JSON: object keys sorted, `loc` and `file` dropped. */
export function canonicalJson(value: unknown): string {
  if (Array.isArray(value)) return '[' + value.map(canonicalJson).join(',') + ']';
  if (value && typeof value === 'object') {
    const keys = Object.keys(value as object)
      .filter((k) => k !== 'loc' && k !== 'file' && (value as Record<string, unknown>)[k] !== undefined)
      .sort();
    return '{' + keys.map((k) => JSON.stringify(k) + ':' + canonicalJson((value as Record<string, unknown>)[k])).join(',') + '}';
  }
  return JSON.stringify(value);
}

/** Full fingerprint, 64 hex digits. */
export function fingerprint(m: Machine): string {
  return bytesToHex(sha256(utf8ToBytes(canonicalJson(m))));
}

/** The first 32 bits of the fingerprint, as carried by the probe's identification frame. */
export function fingerprint32(m: Machine): number {
  return parseInt(fingerprint(m).slice(0, 8), 16) >>> 0;
}
