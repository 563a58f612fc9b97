// Exact two-level minimization: prime implicants by Quine-McCluskey tabular merging over the
// minterms (don't-cares included), then a minimum-cost cover of the prime implicant table.

import { type Cube, type Space, literalCount, universe } from './positional';
import { solveCover } from './covering';

export interface ExactLimits {
  /** Largest input count accepted; the implicant table has 3^inputs entries. Hard cap 16. */
  maxInputs: number;
  /** Give up when there are more prime implicants than this. */
  maxPrimes: number;
  /** Work budget of the covering step, in matrix entries visited (roughly 1e7 per 0.3 s on one core). */
  maxWork: number;
}

export const DEFAULT_EXACT_LIMITS: ExactLimits = {
  maxInputs: 16,
  maxPrimes: 6_000,
  maxWork: 20_000_000,
};

/** Hard cap: the dense implicant table takes 3^n bytes (43 MB at 16 inputs). */
const INPUTS_CAP = 16;

/** An implicant of the tabular method: variable i is free when bit i of `mask` is set, else equals bit i of `value`. */
interface Implicant {
  value: number;
  mask: number;
}

export type ExactOutcome = { cover: Cube[] } | { tooLarge: string };

/**
 * Minimum cover of on-set F with don't-cares D: fewest product terms, then fewest literals.
 * Reports `tooLarge` (with the reason) instead of answering when a limit is hit. A known cover
 * of prime implicants (`incumbent`, e.g. the heuristic's answer) bounds the search; it is
 * returned when the search proves nothing cheaper exists.
 */
export function exactMinimize(
  F: readonly Cube[],
  D: readonly Cube[],
  sp: Space,
  limits: ExactLimits = DEFAULT_EXACT_LIMITS,
  incumbent?: readonly Cube[],
): ExactOutcome {
  const n = sp.n;
  if (n > Math.min(limits.maxInputs, INPUTS_CAP)) return { tooLarge: `${n} inputs exceed the exact limit of ${Math.min(limits.maxInputs, INPUTS_CAP)}` };
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
  let bound = Infinity;
  if (incumbent !== undefined && incumbent.length <= rows) {
    bound = 0;
    for (const c of incumbent) bound += perProduct + literalCount(c, sp);
  }
  const result = solveCover({ rowCols, colRows, cost }, limits.maxWork, bound);
  switch (result.kind) {
    case 'optimal':
      return { cover: result.cols.map((c) => implicantCube(cols[c], sp)) };
    case 'bound-optimal':
      return { cover: [...(incumbent as readonly Cube[])] };
    case 'budget':
      return { tooLarge: `cover search exceeded its work budget of ${limits.maxWork}` };
    case 'infeasible':
      // Cannot happen: every on-set minterm lies in some prime. Kept as a clear report anyway.
      return { tooLarge: 'internal: an on-set minterm is in no prime implicant' };
  }
}

/**
 * Quine-McCluskey merging, tabulated densely: every cube over n variables has a slot in a table
 * of 3^n entries (digit i of the slot is 0, 1 or 2 = absent for variable i). A cube with variable
 * i absent is an implicant exactly when its two halves (variable i = 0 and = 1) are, which is the
 * merging rule of the tabular method; visiting slots in increasing order meets both halves first.
 * An implicant is prime when no merge with a neighbour in any of its fixed variables exists.
 */
export function primeImplicants(table: Uint8Array, n: number, limits: ExactLimits): Implicant[] | string {
  const p3: number[] = [1];
  for (let i = 1; i <= n; i++) p3.push(p3[i - 1] * 3);
  const size = p3[n];
  const imp = new Uint8Array(size);
  const digit = new Uint8Array(n + 1);
  for (let idx = 0; idx < size; idx++) {
    let lowestAbsent = -1;
    for (let i = 0; i < n; i++) {
      if (digit[i] === 2) {
        lowestAbsent = i;
        break;
      }
    }
    if (lowestAbsent < 0) {
      let m = 0;
      for (let i = 0; i < n; i++) m |= digit[i] << i;
      imp[idx] = table[m] !== 0 ? 1 : 0;
    } else {
      imp[idx] = imp[idx - 2 * p3[lowestAbsent]] & imp[idx - p3[lowestAbsent]];
    }
    // Odometer step to the next slot.
    for (let i = 0; i < n; i++) {
      if (digit[i] < 2) {
        digit[i]++;
        break;
      }
      digit[i] = 0;
    }
  }
  const primes: Implicant[] = [];
  digit.fill(0);
  for (let idx = 0; idx < size; idx++) {
    if (imp[idx] === 1) {
      let prime = true;
      let value = 0;
      let mask = 0;
      for (let i = 0; i < n && prime; i++) {
        const d = digit[i];
        if (d === 2) mask |= 1 << i;
        else {
          value |= d << i;
          if (imp[idx + (2 - d) * p3[i]] === 1) prime = false;
        }
      }
      if (prime) {
        primes.push({ value, mask });
        if (primes.length > limits.maxPrimes) return `more than ${limits.maxPrimes} prime implicants`;
      }
    }
    for (let i = 0; i < n; i++) {
      if (digit[i] < 2) {
        digit[i]++;
        break;
      }
      digit[i] = 0;
    }
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
