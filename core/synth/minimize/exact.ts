// Exact two-level minimization: prime implicants by Quine-McCluskey tabular merging over the
// minterms (don't-cares included), then a minimum-cost cover of the prime implicant table.

import { type Cube, type Space, universe } from './positional';
import { solveCover } from './covering';

export interface ExactLimits {
  /** Largest input count accepted; the minterm table has 2^inputs entries. Hard cap 20. */
  maxInputs: number;
  /** Give up when merging produces more implicants than this (all levels together). */
  maxImplicants: number;
  /** Give up when there are more prime implicants than this. */
  maxPrimes: number;
  /** Branch-and-bound node budget of the covering step. */
  maxNodes: number;
}

export const DEFAULT_EXACT_LIMITS: ExactLimits = {
  maxInputs: 16,
  maxImplicants: 400_000,
  maxPrimes: 6_000,
  maxNodes: 20_000,
};

/** Hard cap: implicant keys pack mask and value into one double (2 * 20 bits < 53 bits). */
const KEY_BITS_CAP = 20;

/** An implicant of the tabular method: variable i is free when bit i of `mask` is set, else equals bit i of `value`. */
interface Implicant {
  value: number;
  mask: number;
}

export type ExactOutcome = { cover: Cube[] } | { tooLarge: string };

/**
 * Minimum cover of on-set F with don't-cares D: fewest product terms, then fewest literals.
 * Reports `tooLarge` (with the reason) instead of answering when a limit is hit.
 */
export function exactMinimize(F: readonly Cube[], D: readonly Cube[], sp: Space, limits: ExactLimits = DEFAULT_EXACT_LIMITS): ExactOutcome {
  const n = sp.n;
  if (n > Math.min(limits.maxInputs, KEY_BITS_CAP)) return { tooLarge: `${n} inputs exceed the exact limit of ${Math.min(limits.maxInputs, KEY_BITS_CAP)}` };
  // Point table: 0 off, 1 on, 2 don't-care (a don't-care wins over on where they overlap).
  const size = 1 << n;
  const table = new Uint8Array(size);
  for (const c of F) forEachPoint(c, sp, (m) => (table[m] = 1));
  for (const c of D) forEachPoint(c, sp, (m) => (table[m] = 2));
  let onCount = 0;
  let offCount = 0;
  for (let m = 0; m < size; m++) {
    if (table[m] === 1) onCount++;
    else if (table[m] === 0) offCount++;
  }
  if (onCount === 0) return { cover: [] };
  if (offCount === 0) return { cover: [universe(sp)] };

  const primes = primeImplicants(table, n, limits);
  if (typeof primes === 'string') return { tooLarge: primes };

  // Prime implicant table: rows are on-set minterms, columns the primes that cover any of them.
  const rowOf = new Int32Array(size).fill(-1);
  let rows = 0;
  for (let m = 0; m < size; m++) if (table[m] === 1) rowOf[m] = rows++;
  const rowCols: number[][] = Array.from({ length: rows }, () => []);
  const colRows: number[][] = [];
  const cols: Implicant[] = [];
  for (const p of primes) {
    const covered: number[] = [];
    forEachSubset(p.mask, (sub) => {
      const r = rowOf[p.value | sub];
      if (r >= 0) covered.push(r);
    });
    if (covered.length === 0) continue; // covers only don't-cares
    const id = cols.length;
    cols.push(p);
    colRows.push(covered);
    for (const r of covered) rowCols[r].push(id);
  }
  // Lexicographic cost as one number: every column pays `perProduct`, which exceeds the literal
  // total of any cover with at most `rows` products, then its own literal count.
  const perProduct = n * (rows + 1) + 1;
  const cost = cols.map((p) => perProduct + (n - popcount(p.mask)));
  const result = solveCover({ rowCols, colRows, cost }, limits.maxNodes);
  if (result === null) return { tooLarge: `cover search exceeded ${limits.maxNodes} branch-and-bound nodes` };
  return { cover: result.cols.map((c) => implicantCube(cols[c], sp)) };
}

/**
 * Quine-McCluskey: merge implicants that differ in exactly one fixed variable, level by level;
 * an implicant that never merges is prime. Merging partners are found by hashing instead of
 * pairwise comparison.
 */
export function primeImplicants(table: Uint8Array, n: number, limits: ExactLimits): Implicant[] | string {
  const size = 1 << n;
  const shift = 2 ** n;
  const primes: Implicant[] = [];
  let level: Implicant[] = [];
  for (let m = 0; m < size; m++) if (table[m] !== 0) level.push({ value: m, mask: 0 });
  let total = level.length;
  while (level.length > 0) {
    const present = new Set<number>();
    for (const t of level) present.add(t.mask * shift + t.value);
    const merged = new Set<number>();
    const next: Implicant[] = [];
    const made = new Set<number>();
    for (const t of level) {
      for (let i = 0; i < n; i++) {
        const bit = 1 << i;
        if ((t.mask & bit) !== 0 || (t.value & bit) !== 0) continue;
        const partner = t.mask * shift + (t.value | bit);
        if (!present.has(partner)) continue;
        merged.add(t.mask * shift + t.value);
        merged.add(partner);
        const mask = t.mask | bit;
        const key = mask * shift + t.value;
        if (!made.has(key)) {
          made.add(key);
          next.push({ value: t.value, mask });
        }
      }
    }
    for (const t of level) if (!merged.has(t.mask * shift + t.value)) primes.push(t);
    if (primes.length > limits.maxPrimes) return `more than ${limits.maxPrimes} prime implicants`;
    total += next.length;
    if (total > limits.maxImplicants) return `more than ${limits.maxImplicants} implicants while merging`;
    level = next;
  }
  return primes;
}

/** Call `visit` with every minterm of cube c (bit i of a minterm is variable i). */
function forEachPoint(c: Cube, sp: Space, visit: (m: number) => void): void {
  // Only reached with n <= 20, so the cube is a single care word and a single value word.
  const all = (1 << sp.n) - 1;
  const care = c[0] & all;
  const value = c[sp.w] & care;
  const free = ~care & all;
  forEachSubset(free, (sub) => visit(value | sub));
}

/** Call `visit` with every subset of the bit mask (including 0 and the mask itself). */
function forEachSubset(mask: number, visit: (sub: number) => void): void {
  let sub = 0;
  for (;;) {
    visit(sub);
    if (sub === mask) return;
    sub = (sub - mask) & mask;
  }
}

function popcount(x: number): number {
  let c = 0;
  while (x !== 0) {
    x &= x - 1;
    c++;
  }
  return c;
}

function implicantCube(p: Implicant, sp: Space): Cube {
  const c = universe(sp);
  const care = ~p.mask & ((1 << sp.n) - 1);
  c[0] = care;
  c[sp.w] = p.value & care;
  return c;
}
