// Unate-recursive paradigm on packed covers: tautology, complement and the smallest cube containing
// a complement, each by Shannon expansion on the most binate variable with unate shortcuts.

import {
  type Cube,
  type Space,
  cofactorCover,
  cubeKey,
  intersect,
  isUniverse,
  literalCount,
  literalCube,
  supercube,
  universe,
} from './positional';

/** Per-variable literal counts of a cover: how many cubes hold the negative and the positive literal. */
export interface Columns {
  neg: Int32Array;
  pos: Int32Array;
}

export function columns(F: readonly Cube[], sp: Space): Columns {
  const neg = new Int32Array(sp.n);
  const pos = new Int32Array(sp.n);
  const w = sp.w;
  for (const c of F) {
    for (let k = 0; k < w; k++) {
      let m = c[k];
      while (m !== 0) {
        const low = m & -m;
        const i = (k << 5) | (31 - Math.clz32(low));
        if ((c[w + k] & low) !== 0) pos[i]++;
        else neg[i]++;
        m ^= low;
      }
    }
  }
  return { neg, pos };
}

/**
 * Splitting variable: the most binate one (occurs in both polarities in the most cubes, ties to the
 * most balanced), else the most frequent unate one; -1 when no cube has any literal.
 */
export function splitVariable(cols: Columns, sp: Space): { v: number; binate: boolean } {
  let best = -1;
  let bestScore = -1;
  let bestBalance = Infinity;
  for (let i = 0; i < sp.n; i++) {
    const a = cols.neg[i];
    const b = cols.pos[i];
    if (a === 0 || b === 0) continue;
    const score = a + b;
    const balance = Math.abs(a - b);
    if (score > bestScore || (score === bestScore && balance < bestBalance)) {
      best = i;
      bestScore = score;
      bestBalance = balance;
    }
  }
  if (best >= 0) return { v: best, binate: true };
  for (let i = 0; i < sp.n; i++) {
    const score = cols.neg[i] + cols.pos[i];
    if (score > bestScore) {
      best = i;
      bestScore = score;
    }
  }
  return { v: best, binate: false };
}

function hasUniverse(F: readonly Cube[], sp: Space): boolean {
  for (const c of F) if (isUniverse(c, sp)) return true;
  return false;
}

/**
 * Fraction of the space the cubes could cover at most (sum of their volumes). Below one the
 * cover cannot be a tautology; the margin absorbs floating-point rounding of the sum.
 */
function volumeBelowOne(F: readonly Cube[], sp: Space): boolean {
  let vol = 0;
  for (const c of F) {
    vol += Math.pow(2, -literalCount(c, sp));
    if (vol >= 1) return false;
  }
  return vol < 1 - 1e-6;
}

/** True when the union of the cubes is the whole space. */
export function tautology(F: readonly Cube[], sp: Space): boolean {
  if (F.length === 0) return false;
  if (hasUniverse(F, sp)) return true;
  if (volumeBelowOne(F, sp)) return false;
  const cols = columns(F, sp);
  // Unate reduction: in a variable where only one polarity occurs, the cofactor on the other
  // polarity is contained in the first, so only the cubes free of that variable matter.
  let anyBinate = false;
  const dropWord = new Uint32Array(sp.w);
  let anyDrop = false;
  for (let i = 0; i < sp.n; i++) {
    const a = cols.neg[i];
    const b = cols.pos[i];
    if (a > 0 && b > 0) anyBinate = true;
    else if (a + b > 0) {
      dropWord[i >>> 5] |= 1 << (i & 31);
      anyDrop = true;
    }
  }
  if (!anyBinate) return false; // a unate cover without the universal cube never covers everything
  if (anyDrop) {
    const rest = F.filter((c) => {
      for (let k = 0; k < sp.w; k++) if ((c[k] & dropWord[k]) !== 0) return false;
      return true;
    });
    return tautology(rest, sp);
  }
  const { v } = splitVariable(cols, sp);
  return tautology(cofactorCover(F, literalCube(sp, v, false), sp), sp) && tautology(cofactorCover(F, literalCube(sp, v, true), sp), sp);
}

/** True when cube c lies inside the union of the cover (c is covered iff the cofactor is a tautology). */
export function coversCube(F: readonly Cube[], c: Cube, sp: Space): boolean {
  return tautology(cofactorCover(F, c, sp), sp);
}

/** The complement of a single cube by De Morgan's law: one single-literal cube per literal. */
function complementCube(c: Cube, sp: Space): Cube[] {
  const out: Cube[] = [];
  const w = sp.w;
  for (let k = 0; k < w; k++) {
    let m = c[k];
    while (m !== 0) {
      const low = m & -m;
      const i = (k << 5) | (31 - Math.clz32(low));
      out.push(literalCube(sp, i, (c[w + k] & low) === 0));
      m ^= low;
    }
  }
  return out;
}

/** Cube with variable v set to the given polarity (v is absent from c). */
function withLiteral(c: Cube, sp: Space, v: number, positive: boolean): Cube {
  const r = c.slice();
  const word = v >>> 5;
  const bit = 1 << (v & 31);
  r[word] |= bit;
  if (positive) r[sp.w + word] |= bit;
  return r;
}

/**
 * Recombine x'.C0 + x.C1, where C0 and C1 complement the cofactors F0 and F1. A cube a of C0 may
 * drop its x' literal when a also misses every cube of F1 (then x.a lies in the complement too);
 * likewise for C1 against F0. Lifting keeps the complement small.
 */
function mergeHalves(c0: Cube[], c1: Cube[], F0: readonly Cube[], F1: readonly Cube[], sp: Space, v: number): Cube[] {
  const out: Cube[] = [];
  // The halves are duplicate-free and their unlifted cubes differ in x, so only a cube lifted
  // from both halves can repeat.
  const lifted0 = new Set<string | number>();
  for (const a of c0) {
    if (missesAll(a, F1, sp)) {
      lifted0.add(cubeKey(a));
      out.push(a);
    } else out.push(withLiteral(a, sp, v, false));
  }
  for (const b of c1) {
    if (missesAll(b, F0, sp)) {
      if (!lifted0.has(cubeKey(b))) out.push(b);
    } else out.push(withLiteral(b, sp, v, true));
  }
  return out;
}

function missesAll(a: Cube, F: readonly Cube[], sp: Space): boolean {
  const w = sp.w;
  for (let j = 0; j < F.length; j++) {
    const f = F[j];
    let disjoint = false;
    for (let k = 0; k < w; k++) {
      if ((a[k] & f[k] & (a[w + k] ^ f[w + k])) !== 0) {
        disjoint = true;
        break;
      }
    }
    if (!disjoint) return false;
  }
  return true;
}

/** The complement of a cover, as a cover (not necessarily minimal, free of duplicate cubes). */
export function complement(F: readonly Cube[], sp: Space): Cube[] {
  if (F.length === 0) return [universe(sp)];
  if (hasUniverse(F, sp)) return [];
  if (F.length === 1) return complementCube(F[0], sp);
  const cols = columns(F, sp);
  const { v } = splitVariable(cols, sp);
  const F0 = cofactorCover(F, literalCube(sp, v, false), sp);
  const F1 = cofactorCover(F, literalCube(sp, v, true), sp);
  return mergeHalves(complement(F0, sp), complement(F1, sp), F0, F1, sp, v);
}

/**
 * Smallest cube containing the complement of F, or null when F is a tautology. This is the
 * quantity REDUCE needs; it is computed without building the complement itself.
 */
export function complementSupercube(F: readonly Cube[], sp: Space): Cube | null {
  if (F.length === 0) return universe(sp);
  if (hasUniverse(F, sp)) return null;
  if (F.length === 1) {
    const parts = complementCube(F[0], sp);
    return parts.length === 1 ? parts[0] : universe(sp);
  }
  const cols = columns(F, sp);
  const { v } = splitVariable(cols, sp);
  const lo = literalCube(sp, v, false);
  const hi = literalCube(sp, v, true);
  const a = complementSupercube(cofactorCover(F, lo, sp), sp);
  const F1 = cofactorCover(F, hi, sp);
  if (a !== null && isUniverse(a, sp)) {
    // The x' half alone already spans every other variable: only x itself can stay.
    return tautology(F1, sp) ? lo : a;
  }
  const b = complementSupercube(F1, sp);
  if (a === null && b === null) return null;
  if (a === null) return intersect(b as Cube, hi, sp);
  if (b === null) return intersect(a, lo, sp);
  return supercube(a, b, sp);
}
