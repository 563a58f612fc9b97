// State encodings: binary (declaration order), Gray (reflected binary), one-hot and the design's own
// codes. Codes no state uses become don't-cares of every controller equation.
import type { Machine } from '../ir/schema';
import type { Namer } from './expr';
import type { Encoding, EncodingKind } from './schema';

export type EncodeOutcome = { ok: true; encoding: Encoding } | { ok: false; error: string };

/** Largest state register the custom encoding accepts; wider codes make no sense for a controller. */
export const MAX_CUSTOM_WIDTH = 32;

/** Smallest bit count that gives `n` distinct codes (at least one flip-flop). */
export function bitsForStates(n: number): number {
  let b = 1;
  while (2 ** b < n) b++;
  return b;
}

/** Reflected binary code of i: neighbours differ in one bit. */
export function grayCode(i: number): number {
  return i ^ (i >>> 1);
}

function toBits(code: number, width: number): string {
  return code.toString(2).padStart(width, '0');
}

/** Code of each state as a number, or a message naming the problem. */
export function stateCodes(m: Machine, kind: EncodingKind): { codes: number[]; width: number } | { error: string } {
  const n = m.states.length;
  switch (kind) {
    case 'binary':
      return { codes: m.states.map((_, i) => i), width: bitsForStates(n) };
    case 'gray':
      return { codes: m.states.map((_, i) => grayCode(i)), width: bitsForStates(n) };
    case 'onehot':
      if (n > 1024) return { error: `one-hot encoding of ${n} states would need ${n} flip-flops; at most 1024 are supported` };
      return { codes: [], width: n };
    case 'custom': {
      const missing = m.states.filter((s) => s.code === null).map((s) => s.name);
      if (missing.length === m.states.length) return { error: `custom encoding: the design gives no state codes; add 'code N' after each state name (e.g. 'state ${m.states[0].name} code 0') or choose binary, gray or onehot` };
      if (missing.length > 0) return { error: `custom encoding: state${missing.length > 1 ? 's' : ''} ${missing.map((x) => `'${x}'`).join(', ')} ha${missing.length > 1 ? 've' : 's'} no code; every state needs one` };
      const seen = new Map<number, string>();
      for (const s of m.states) {
        const c = s.code!;
        if (!Number.isInteger(c) || c < 0 || c >= 2 ** MAX_CUSTOM_WIDTH) return { error: `custom encoding: state '${s.name}' has code ${c}; codes run from 0 to 2^${MAX_CUSTOM_WIDTH}-1` };
        const other = seen.get(c);
        if (other !== undefined) return { error: `custom encoding: states '${other}' and '${s.name}' both have code ${c}; codes must be unique` };
        seen.set(c, s.name);
      }
      const largest = Math.max(...m.states.map((s) => s.code!));
      return { codes: m.states.map((s) => s.code!), width: Math.max(1, largest.toString(2).length) };
    }
  }
}

/**
 * Cubes covering every bit string of `width` bits that is not in `used`: the complement of a set of
 * points, built on the binary tree of prefixes (one cube per missing branch).
 */
export function unusedCodeCubes(used: readonly string[], width: number): string[] {
  const out: string[] = [];
  const walk = (prefix: string, codes: readonly string[]): void => {
    if (codes.length === 0) {
      out.push(prefix + '-'.repeat(width - prefix.length));
      return;
    }
    if (prefix.length === width) return;
    const d = prefix.length;
    walk(prefix + '0', codes.filter((c) => c[d] === '0'));
    walk(prefix + '1', codes.filter((c) => c[d] === '1'));
  };
  walk('', [...new Set(used)]);
  return out;
}

/** The encoding, with state bit names allocated from `namer` so they clash with nothing. */
export function encodeStates(m: Machine, kind: EncodingKind, namer: Namer): EncodeOutcome {
  const r = stateCodes(m, kind);
  if ('error' in r) return { ok: false, error: r.error };
  const { width } = r;
  let codes: string[];
  let bits: string[];
  if (kind === 'onehot') {
    // State i owns flip-flop i; the leftmost bit belongs to the first state.
    codes = m.states.map((_, i) => '0'.repeat(i) + '1' + '0'.repeat(width - i - 1));
    bits = m.states.map((s) => namer.fresh(`q_${s.name}`));
  } else {
    codes = r.codes.map((c) => toBits(c, width));
    bits = Array.from({ length: width }, (_, i) => namer.fresh(`q${width - 1 - i}`));
  }
  return { ok: true, encoding: { kind, width, bits, codes, resetCode: codes[m.resetState], unusedCodes: unusedCodeCubes(codes, width) } };
}
