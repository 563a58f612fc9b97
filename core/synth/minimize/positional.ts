// Packed cube encoding used by every minimizer algorithm: a care mask and a value mask per cube.
// Word-parallel operations on these masks keep the heuristic free of any minterm enumeration.

/**
 * A cube over `n` variables packed into `2 * w` 32-bit words (w = ceil(n / 32)), held as signed
 * 32-bit integers (the results of JavaScript bit operations) in a plain array, which is far
 * cheaper to allocate than a typed array when the complement creates millions of cubes.
 * Words [0, w) hold the care mask (bit set: the variable appears as a literal);
 * words [w, 2w) hold the literal polarity (bit set: the literal is positive).
 * Invariant: a value bit is only ever set where the care bit is set, so equal
 * cubes have equal words and can be hashed by their words.
 * Variable i lives in word i >>> 5, bit i & 31; variable 0 is the leftmost
 * character of the string form.
 */
export type Cube = number[];

/** The dimensions shared by all cubes of one problem. */
export interface Space {
  readonly n: number;
  readonly w: number;
}

export function makeSpace(n: number): Space {
  return { n, w: Math.max(1, Math.ceil(n / 32)) };
}

/** The cube with no literals, i.e. the whole Boolean space. */
export function universe(sp: Space): Cube {
  return zeros(2 * sp.w);
}

function zeros(len: number): Cube {
  const c: Cube = [];
  for (let k = 0; k < len; k++) c.push(0);
  return c;
}

export function isUniverse(c: Cube, sp: Space): boolean {
  for (let k = 0; k < sp.w; k++) if (c[k] !== 0) return false;
  return true;
}

/** Parse a '0'/'1'/'-' string that has already been validated. */
export function encode(s: string, sp: Space): Cube {
  const c = universe(sp);
  for (let i = 0; i < sp.n; i++) {
    const ch = s.charCodeAt(i);
    if (ch === 45 /* '-' */) continue;
    const word = i >>> 5;
    const bit = 1 << (i & 31);
    c[word] |= bit;
    if (ch === 49 /* '1' */) c[sp.w + word] |= bit;
  }
  return c;
}

export function decode(c: Cube, sp: Space): string {
  let s = '';
  for (let i = 0; i < sp.n; i++) s += '01-'[literalAt(c, sp, i)];
  return s;
}

/** 0 for a negative literal, 1 for a positive literal, 2 when the variable is absent. */
export function literalAt(c: Cube, sp: Space, i: number): 0 | 1 | 2 {
  const word = i >>> 5;
  const bit = 1 << (i & 31);
  if ((c[word] & bit) === 0) return 2;
  return (c[sp.w + word] & bit) === 0 ? 0 : 1;
}

/** The cube holding the single literal of variable i with the given polarity. */
export function literalCube(sp: Space, i: number, positive: boolean): Cube {
  const c = universe(sp);
  const word = i >>> 5;
  const bit = 1 << (i & 31);
  c[word] = bit;
  if (positive) c[sp.w + word] = bit;
  return c;
}

export function intersects(a: Cube, b: Cube, sp: Space): boolean {
  const w = sp.w;
  for (let k = 0; k < w; k++) if ((a[k] & b[k] & (a[w + k] ^ b[w + k])) !== 0) return false;
  return true;
}

/** The common part of two cubes, or null when they are disjoint. */
export function intersect(a: Cube, b: Cube, sp: Space): Cube | null {
  if (!intersects(a, b, sp)) return null;
  const w = sp.w;
  const c = zeros(2 * w);
  for (let k = 0; k < w; k++) {
    c[k] = a[k] | b[k];
    c[w + k] = a[w + k] | b[w + k];
  }
  return c;
}

/** True when every point of b lies in a. */
export function contains(a: Cube, b: Cube, sp: Space): boolean {
  const w = sp.w;
  for (let k = 0; k < w; k++) {
    if ((a[k] & ~b[k]) !== 0) return false;
    if ((a[k] & (a[w + k] ^ b[w + k])) !== 0) return false;
  }
  return true;
}

/** Smallest cube containing both a and b. */
export function supercube(a: Cube, b: Cube, sp: Space): Cube {
  const w = sp.w;
  const c = zeros(2 * w);
  for (let k = 0; k < w; k++) {
    const care = a[k] & b[k] & ~(a[w + k] ^ b[w + k]);
    c[k] = care;
    c[w + k] = a[w + k] & care;
  }
  return c;
}

/** Cofactor of c with respect to cube p (c restricted to p, p's variables freed); null when disjoint. */
export function cofactor(c: Cube, p: Cube, sp: Space): Cube | null {
  if (!intersects(c, p, sp)) return null;
  const w = sp.w;
  const r = zeros(2 * w);
  for (let k = 0; k < w; k++) {
    const care = c[k] & ~p[k];
    r[k] = care;
    r[w + k] = c[w + k] & care;
  }
  return r;
}

export function cofactorCover(cover: readonly Cube[], p: Cube, sp: Space): Cube[] {
  const out: Cube[] = [];
  for (const c of cover) {
    const r = cofactor(c, p, sp);
    if (r !== null) out.push(r);
  }
  return out;
}

export function popcount32(x: number): number {
  x = x - ((x >>> 1) & 0x55555555);
  x = (x & 0x33333333) + ((x >>> 2) & 0x33333333);
  x = (x + (x >>> 4)) & 0x0f0f0f0f;
  return Math.imul(x, 0x01010101) >>> 24;
}

export function literalCount(c: Cube, sp: Space): number {
  let n = 0;
  for (let k = 0; k < sp.w; k++) n += popcount32(c[k]);
  return n;
}

/** Hashable identity of a cube (equal cubes give equal keys). */
export function cubeKey(c: Cube): string | number {
  // Up to 21 variables the care and value words pack exactly into one double.
  if (c.length === 2 && c[0] >= 0 && c[0] < 0x200000) return c[0] * 4294967296 + (c[1] >>> 0);
  let s = '';
  for (let k = 0; k < c.length; k++) s += `${c[k]},`;
  return s;
}

/** Drop cubes contained in another cube of the list (single-cube containment); keeps the first of equal cubes. */
export function singleCubeContainment(cover: readonly Cube[], sp: Space): Cube[] {
  // Larger cubes (fewer literals) first, so a cube can only be contained by an earlier one.
  const order = cover.map((c, i) => ({ c, i, lits: literalCount(c, sp) }));
  order.sort((x, y) => x.lits - y.lits || x.i - y.i);
  const kept: Cube[] = [];
  for (const { c } of order) {
    let covered = false;
    for (const k of kept) {
      if (contains(k, c, sp)) {
        covered = true;
        break;
      }
    }
    if (!covered) kept.push(c);
  }
  return kept;
}

/** A cover stored as one contiguous word array (cube i at words [i * 2w, (i + 1) * 2w)); scanning it is cache friendly. */
export interface FlatCover {
  readonly words: Uint32Array;
  readonly count: number;
}

export function flatten(cover: readonly Cube[], sp: Space): FlatCover {
  const stride = 2 * sp.w;
  const words = new Uint32Array(cover.length * stride);
  cover.forEach((c, i) => words.set(c, i * stride)); // stored unsigned; only ever read through bit operations
  return { words, count: cover.length };
}
