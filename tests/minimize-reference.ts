// Independent reference for the minimizer tests: plain truth tables built straight from the cube
// strings (no code shared with core/synth/minimize), the brute-force minimum, and random functions.
import { SeededRandom } from '../core/util/prng';

export interface Fn {
  inputs: number;
  on: string[];
  dc: string[];
}

/**
 * Truth table of a cover as a bit array: point p (bit i of p = variable i, variable 0 being the
 * leftmost cube character) is bit p & 31 of word p >>> 5. Built word-parallel: variables 0..4
 * select the bit inside a word, the others select the word, so a 24-variable table takes
 * 2^19 word steps per cube.
 */
export function truthTable(cubes: readonly string[], n: number): Uint32Array {
  if (n > 26) throw new Error(`truthTable: ${n} variables is too many for an exhaustive table`);
  const words = n <= 5 ? 1 : 1 << (n - 5);
  const table = new Uint32Array(words);
  const low = Math.min(n, 5);
  const pointsInWord = 1 << low;
  for (const cube of cubes) {
    if (cube.length !== n) throw new Error(`truthTable: cube '${cube}' is not ${n} characters`);
    let pattern = 0;
    for (let b = 0; b < pointsInWord; b++) {
      let ok = true;
      for (let j = 0; j < low; j++) {
        const ch = cube[j];
        const bit = (b >> j) & 1;
        if ((ch === '0' && bit) || (ch === '1' && !bit)) ok = false;
      }
      if (ok) pattern |= 1 << b;
    }
    let care = 0;
    let val = 0;
    for (let j = low; j < n; j++) {
      const ch = cube[j];
      if (ch === '-') continue;
      care |= 1 << (j - 5);
      if (ch === '1') val |= 1 << (j - 5);
    }
    for (let w = 0; w < words; w++) if ((w & care) === val) table[w] |= pattern;
  }
  return table;
}

/** First point where the cover disagrees with the function on a care point, or null when none. */
export function coverMismatch(f: Fn, cover: readonly string[]): string | null {
  const on = truthTable(f.on, f.inputs);
  const dc = truthTable(f.dc, f.inputs);
  const got = truthTable(cover, f.inputs);
  const points = 2 ** f.inputs;
  for (let w = 0; w < on.length; w++) {
    const mustBeOn = on[w] & ~dc[w];
    const mayBeOn = on[w] | dc[w];
    let bad = (mustBeOn & ~got[w]) | (got[w] & ~mayBeOn);
    if (points < 32) bad &= (1 << points) - 1;
    if (bad !== 0) {
      const p = w * 32 + (31 - Math.clz32(bad & -bad));
      const where = Array.from({ length: f.inputs }, (_, i) => ((p / 2 ** i) & 1 ? '1' : '0')).join('');
      return `${where}: function ${(mustBeOn >>> (p & 31)) & 1 ? 1 : 0}, cover ${(got[w] >>> (p & 31)) & 1}`;
    }
  }
  return null;
}

export function literalsOf(cube: string): number {
  let n = 0;
  for (const ch of cube) if (ch !== '-') n++;
  return n;
}

/**
 * True minimum (products, then literals) over all sets of implicants, for up to 5 variables.
 * Any cover contains an implicant through the lowest on-point it must cover, so branching on
 * the implicants through that point visits every cover. The product count is found by iterative
 * deepening (the first depth with a cover is the minimum), the literal count by the same search
 * at that depth, memoized on (points covered, terms left). Only implicants holding at least one
 * on-point can belong to a minimum cover (dropping any other keeps a cover and lowers its cost).
 */
export function bruteForceMinimum(f: Fn): { products: number; literals: number } {
  const n = f.inputs;
  if (n > 5) throw new Error('bruteForceMinimum: at most 5 variables');
  const size = 1 << n;
  const on = truthTable(f.on, n)[0];
  const dc = truthTable(f.dc, n)[0];
  const full = size === 32 ? 0xffffffff : (1 << size) - 1;
  const care = (on & ~dc & full) >>> 0;
  const off = (~(on | dc) & full) >>> 0;
  const implicants: { points: number; lits: number }[] = [];
  let widest = 0;
  for (let code = 0; code < 3 ** n; code++) {
    let cube = '';
    let c = code;
    for (let i = 0; i < n; i++) {
      cube += '01-'[c % 3];
      c = Math.floor(c / 3);
    }
    const points = (truthTable([cube], n)[0] & full) >>> 0;
    if ((points & off) === 0 && (points & care) !== 0) {
      implicants.push({ points, lits: literalsOf(cube) });
      widest = Math.max(widest, popcount((points & care) >>> 0));
    }
  }
  const memo = new Map<number, number>();
  const search = (covered: number, termsLeft: number): number => {
    const left = (care & ~covered) >>> 0;
    if (left === 0) return 0;
    if (termsLeft === 0 || popcount(left) > termsLeft * widest) return Infinity;
    const key = covered * 64 + termsLeft;
    const hit = memo.get(key);
    if (hit !== undefined) return hit;
    const lowest = left & -left;
    let result = Infinity;
    for (const imp of implicants) {
      if ((imp.points & lowest) === 0) continue;
      result = Math.min(result, imp.lits + search((covered | imp.points) >>> 0, termsLeft - 1));
    }
    memo.set(key, result);
    return result;
  };
  for (let products = 0; ; products++) {
    const literals = search(0, products);
    if (literals < Infinity) return { products, literals };
  }
}

function popcount(x: number): number {
  let c = 0;
  for (let v = x >>> 0; v !== 0; v = (v & (v - 1)) >>> 0) c++;
  return c;
}

/** Cube string with minterm m's bits, most significant variable first (A = variable 0), as textbooks number minterms. */
export function mintermCube(m: number, n: number): string {
  let s = '';
  for (let i = n - 1; i >= 0; i--) s += (m >> i) & 1 ? '1' : '0';
  return s;
}

export function randomCube(rng: SeededRandom, n: number, pDash: number): string {
  let s = '';
  for (let i = 0; i < n; i++) s += rng.float() < pDash ? '-' : rng.below(2) ? '1' : '0';
  return s;
}

/**
 * Random function given as cubes: `onCount` on-set cubes and `dcCount` don't-care cubes, each
 * variable absent with probability `pDash`.
 */
export function randomCubeFunction(rng: SeededRandom, n: number, onCount: number, dcCount: number, pDash: number): Fn {
  return {
    inputs: n,
    on: Array.from({ length: onCount }, () => randomCube(rng, n, pDash)),
    dc: Array.from({ length: dcCount }, () => randomCube(rng, n, pDash)),
  };
}

/** Random function given by its truth table: each point on with probability pOn, else don't-care with pDc. */
export function randomTableFunction(rng: SeededRandom, n: number, pOn: number, pDc: number): Fn {
  const f: Fn = { inputs: n, on: [], dc: [] };
  for (let p = 0; p < 1 << n; p++) {
    const u = rng.float();
    const cube = Array.from({ length: n }, (_, i) => ((p >> i) & 1 ? '1' : '0')).join('');
    if (u < pOn) f.on.push(cube);
    else if (u < pOn + pDc) f.dc.push(cube);
  }
  return f;
}

/**
 * A function with hidden structure: `blocks` random cubes, each handed to the minimizer cut into
 * up to 2^cuts pieces (some pieces re-widened so they overlap), plus a few don't-care cubes. The
 * minimizer has to find the merges.
 */
export function fragmentedFunction(rng: SeededRandom, n: number, blocks: number, cuts: number, pDash: number, dcCount: number): Fn {
  const on: string[] = [];
  for (let b = 0; b < blocks; b++) {
    const base = randomCube(rng, n, pDash);
    const free: number[] = [];
    for (let i = 0; i < n; i++) if (base[i] === '-') free.push(i);
    const chosen: number[] = [];
    while (chosen.length < Math.min(cuts, free.length)) {
      const i = free[rng.below(free.length)];
      if (!chosen.includes(i)) chosen.push(i);
    }
    for (let m = 0; m < 1 << chosen.length; m++) {
      const piece = [...base];
      chosen.forEach((i, j) => (piece[i] = (m >> j) & 1 ? '1' : '0'));
      if (chosen.length > 0 && rng.float() < 0.3) piece[chosen[rng.below(chosen.length)]] = '-';
      on.push(piece.join(''));
    }
  }
  return { inputs: n, on, dc: Array.from({ length: dcCount }, () => randomCube(rng, n, Math.max(0, pDash - 0.1))) };
}
