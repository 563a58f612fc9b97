// Heuristic two-level minimization in the manner of Espresso (Brayton, Hachtel, McMullen and
// Sangiovanni-Vincentelli, "Logic Minimization Algorithms for VLSI Synthesis", Kluwer 1984):
// EXPAND, IRREDUNDANT and REDUCE repeated on cubes until the cover stops improving, plus the
// final LAST_GASP attempt. Nothing here enumerates minterms.

import {
  type Cube,
  type Space,
  type FlatCover,
  contains,
  cubeKey,
  flatten,
  intersect,
  literalCount,
  popcount32,
  singleCubeContainment,
  universe,
} from './positional';
import { irredundant } from './irredundant';
import { complement, complementSupercube, coversCube } from './unate';

/** Cost of a cover in the order the minimizer optimizes: product terms first, then literals. */
export interface PackedCost {
  products: number;
  literals: number;
}

export function packedCost(F: readonly Cube[], sp: Space): PackedCost {
  let literals = 0;
  for (const c of F) literals += literalCount(c, sp);
  return { products: F.length, literals };
}

export function costLess(a: PackedCost, b: PackedCost): boolean {
  return a.products < b.products || (a.products === b.products && a.literals < b.literals);
}

/** Upper bound on improvement passes; each accepted pass lowers the cost, so this is a hang guard only. */
const MAX_PASSES = 200;

/**
 * Minimize the on-set cover F with don't-care cover D. Returns a cover of prime implicants that
 * contains every point of F outside D and no point outside F and D.
 */
export function heuristicMinimize(F: readonly Cube[], D: readonly Cube[], sp: Space): Cube[] {
  // Points of F that are also don't-cares need no cover: drop cubes lying wholly in D.
  let on = singleCubeContainment(F, sp).filter((c) => !coversCube(D, c, sp));
  if (on.length === 0) return [];
  const offCubes = complement([...on, ...D], sp);
  if (offCubes.length === 0) return [universe(sp)];
  const R = flatten(offCubes, sp);

  on = expand(on, R, sp);
  on = irredundant(on, D, sp);
  let cost = packedCost(on, sp);
  for (let pass = 0; pass < MAX_PASSES; pass++) {
    let next = reduce(on, D, sp);
    next = expand(next, R, sp);
    next = irredundant(next, D, sp);
    let nextCost = packedCost(next, sp);
    if (!costLess(nextCost, cost)) {
      next = lastGasp(on, D, R, sp);
      nextCost = packedCost(next, sp);
      if (!costLess(nextCost, cost)) break;
    }
    on = next;
    cost = nextCost;
  }
  return on;
}

// ---------------------------------------------------------------------------------------------
// EXPAND

/** Variable sets are bit masks of w words; these helpers work on rows of a flat word array. */
function isZero(a: Uint32Array, ao: number, w: number): boolean {
  for (let k = 0; k < w; k++) if (a[ao + k] !== 0) return false;
  return true;
}

function countBits(a: Uint32Array, ao: number, w: number): number {
  let n = 0;
  for (let k = 0; k < w; k++) n += popcount32(a[ao + k]);
  return n;
}

/**
 * Expand every cube of F to a prime implicant (no intersection with the off-set R), choosing the
 * literals to drop so that the prime covers as many other cubes of F as possible; cubes covered
 * by an expanded prime leave the cover.
 */
export function expand(F: readonly Cube[], R: FlatCover, sp: Space): Cube[] {
  const scratch = new Uint32Array(R.count * sp.w);
  // Largest cubes first: they are the most likely to grow into primes that swallow small cubes.
  const order = F.map((c, i) => ({ c, i, lits: literalCount(c, sp) }));
  order.sort((a, b) => a.lits - b.lits || a.i - b.i);
  const cubes = order.map((o) => o.c);
  const covered = new Uint8Array(cubes.length);
  const out: Cube[] = [];
  for (let i = 0; i < cubes.length; i++) {
    if (covered[i]) continue;
    covered[i] = 1;
    const candidates: number[] = [];
    for (let j = 0; j < cubes.length; j++) if (!covered[j]) candidates.push(j);
    const prime = expandCube(cubes[i], R, candidates.map((j) => cubes[j]), sp, scratch);
    for (const j of candidates) if (contains(prime, cubes[j], sp)) covered[j] = 1;
    out.push(prime);
  }
  return out;
}

/**
 * Expand one cube against the off-set. Blocking rows record, per off-set cube, which literals of
 * the cube keep it disjoint from that off-set cube (at least one must stay); covering rows record
 * which literals must go for the cube to contain another cube of F. Literals are raised one at a
 * time, always the one most needed by the cubes that can still be covered, with the literals that
 * a blocking row forces kept fixed; once nothing more can be covered the cube is made prime by
 * keeping a small set of literals that hits every blocking row and raising the rest.
 */
export function expandCube(c: Cube, R: FlatCover, others: readonly Cube[], sp: Space, scratch = new Uint32Array(R.count * sp.w)): Cube {
  const w = sp.w;
  const free = new Uint32Array(w);
  const raised = new Uint32Array(w);
  for (let k = 0; k < w; k++) free[k] = c[k];

  // Blocking rows. An off-set cube at distance one from c forces its single conflicting literal
  // to stay; every other row through such a literal is then satisfied, so only the rows missing
  // all forced literals are kept, deduplicated and reduced to the minimal ones.
  const forced = new Uint32Array(w);
  const Rw = R.words;
  const stride = 2 * w;
  if (w === 1) {
    // Single-word fast path (up to 32 variables): the common case, kept free of inner loops.
    const care = c[0];
    const val = c[1];
    let f = 0;
    for (let i = 0, o = 0; i < R.count; i++, o += 2) {
      const x = care & Rw[o] & (val ^ Rw[o + 1]);
      scratch[i] = x;
      if ((x & (x - 1)) === 0) f |= x;
    }
    forced[0] = f;
  } else {
    for (let i = 0; i < R.count; i++) {
      const o = i * stride;
      let bits = 0;
      for (let k = 0; k < w; k++) {
        const x = c[k] & Rw[o + k] & (c[w + k] ^ Rw[o + w + k]);
        scratch[i * w + k] = x;
        bits += popcount32(x);
      }
      if (bits === 1) for (let k = 0; k < w; k++) forced[k] |= scratch[i * w + k];
    }
  }
  const rawRows: Uint32Array[] = [];
  const seen = new Set<string | number>();
  if (w === 1) {
    const f = forced[0];
    for (let i = 0; i < R.count; i++) {
      const x = scratch[i];
      if ((x & f) !== 0 || seen.has(x)) continue;
      seen.add(x);
      rawRows.push(Uint32Array.of(x));
    }
  } else {
    for (let i = 0; i < R.count; i++) {
      let hit = false;
      for (let k = 0; k < w; k++) if ((scratch[i * w + k] & forced[k]) !== 0) hit = true;
      if (hit) continue;
      const row = scratch.slice(i * w, i * w + w);
      const key = row.join(',');
      if (seen.has(key)) continue;
      seen.add(key);
      rawRows.push(row);
    }
  }
  rawRows.sort((a, b) => countBits(a, 0, w) - countBits(b, 0, w));
  const minimal: Uint32Array[] = [];
  for (let k = 0; k < w; k++) free[k] &= ~forced[k];
  for (const row of rawRows) {
    let implied = false;
    for (const m of minimal) {
      let subset = true;
      for (let k = 0; k < w; k++) {
        if ((m[k] & ~row[k]) !== 0) {
          subset = false;
          break;
        }
      }
      if (subset) {
        implied = true;
        break;
      }
    }
    if (!implied) minimal.push(row);
  }
  let nb = minimal.length;
  const block = new Uint32Array(nb * w);
  minimal.forEach((row, i) => block.set(row, i * w));

  // Covering rows: literals to raise for c to contain each other cube.
  let nc = others.length;
  const cover = new Uint32Array(nc * w);
  for (let j = 0; j < nc; j++) {
    const d = others[j];
    for (let k = 0; k < w; k++) cover[j * w + k] = c[k] & (~d[k] | (c[w + k] ^ d[w + k]));
  }

  const fixedOf = (k: number): number => c[k] & ~free[k] & ~raised[k];
  const live = new Uint32Array(w);
  const need = new Uint32Array(w);
  const freq = new Int32Array(sp.n);

  for (;;) {
    // Essential fixing: a blocking row with a single free literal left forces that literal to stay.
    let changed = true;
    while (changed) {
      changed = false;
      let kept = 0;
      for (let b = 0; b < nb; b++) {
        const o = b * w;
        let hitsFixed = false;
        for (let k = 0; k < w; k++) if ((block[o + k] & fixedOf(k)) !== 0) hitsFixed = true;
        if (hitsFixed) continue; // satisfied by a kept literal: drop the row
        for (let k = 0; k < w; k++) live[k] = block[o + k] & free[k];
        if (countBits(live, 0, w) === 1) {
          for (let k = 0; k < w; k++) free[k] &= ~live[k];
          changed = true;
          continue;
        }
        if (kept !== b) block.copyWithin(kept * w, o, o + w);
        kept++;
      }
      nb = kept;
    }

    // Covering rows that need a fixed literal raised can no longer be covered; drop them.
    let keptCover = 0;
    for (let j = 0; j < nc; j++) {
      const o = j * w;
      let blocked = false;
      for (let k = 0; k < w; k++) if ((cover[o + k] & fixedOf(k)) !== 0) blocked = true;
      if (blocked) continue;
      let done = true;
      for (let k = 0; k < w; k++) if ((cover[o + k] & free[k]) !== 0) done = false;
      if (done) continue; // already contained
      if (keptCover !== j) cover.copyWithin(keptCover * w, o, o + w);
      keptCover++;
    }
    nc = keptCover;
    if (isZero(free, 0, w)) break;

    // Among the cubes that can still be covered together with the blocking rows, count how
    // often each free literal must be raised; raise the most wanted one. A cube found
    // infeasible stays infeasible (raising more literals only shrinks both sides of the test,
    // and fixing a literal the test relies on blocks the cube), so its row is dropped.
    freq.fill(0);
    let anyFeasible = false;
    keptCover = 0;
    for (let j = 0; j < nc; j++) {
      const o = j * w;
      for (let k = 0; k < w; k++) need[k] = cover[o + k] & free[k];
      let feasible = true;
      for (let b = 0; b < nb && feasible; b++) {
        const bo = b * w;
        let escapes = false;
        for (let k = 0; k < w; k++) {
          if ((block[bo + k] & free[k] & ~need[k]) !== 0) {
            escapes = true;
            break;
          }
        }
        if (!escapes) feasible = false;
      }
      if (!feasible) continue;
      if (keptCover !== j) cover.copyWithin(keptCover * w, o, o + w);
      keptCover++;
      anyFeasible = true;
      for (let k = 0; k < w; k++) {
        let m = need[k];
        while (m !== 0) {
          const low = m & -m;
          freq[(k << 5) | (31 - Math.clz32(low))]++;
          m ^= low;
        }
      }
    }
    nc = keptCover;
    if (!anyFeasible) break;
    let best = -1;
    for (let v = 0; v < sp.n; v++) if (freq[v] > 0 && (best < 0 || freq[v] > freq[best])) best = v;
    const word = best >>> 5;
    const bit = 1 << (best & 31);
    free[word] &= ~bit;
    raised[word] |= bit;
  }

  // Make the cube prime: keep a greedy hitting set of the remaining blocking rows, raise the rest.
  if (!isZero(free, 0, w)) {
    const rowFree = new Uint32Array(w);
    for (;;) {
      freq.fill(0);
      let open = 0;
      for (let b = 0; b < nb; b++) {
        const o = b * w;
        let hitsFixed = false;
        for (let k = 0; k < w; k++) if ((block[o + k] & fixedOf(k)) !== 0) hitsFixed = true;
        if (hitsFixed) continue;
        open++;
        for (let k = 0; k < w; k++) {
          rowFree[k] = block[o + k] & free[k];
          let m = rowFree[k];
          while (m !== 0) {
            const low = m & -m;
            freq[(k << 5) | (31 - Math.clz32(low))]++;
            m ^= low;
          }
        }
      }
      if (open === 0) break;
      let best = -1;
      for (let v = 0; v < sp.n; v++) if (freq[v] > 0 && (best < 0 || freq[v] > freq[best])) best = v;
      // A row with no free literal would mean c meets the off-set; callers never pass such a cube.
      if (best < 0) throw new Error('expandCube: cube intersects the off-set');
      free[best >>> 5] &= ~(1 << (best & 31)); // keep this literal
    }
    for (let k = 0; k < w; k++) {
      raised[k] |= free[k];
      free[k] = 0;
    }
  }

  const out = c.slice();
  for (let k = 0; k < w; k++) {
    out[k] &= ~raised[k];
    out[w + k] &= out[k];
  }
  return out;
}

// ---------------------------------------------------------------------------------------------
// REDUCE

/**
 * Shrink each cube, in turn, to the smallest cube that still covers the points only it covers
 * (given the other cubes as already reduced, and D). This moves the cover away from a local
 * minimum so that the next EXPAND can find different primes. Cubes that turn out to cover
 * nothing of their own vanish.
 */
export function reduce(F: readonly Cube[], D: readonly Cube[], sp: Space): Cube[] {
  const order = F.map((c, i) => ({ c, i, lits: literalCount(c, sp) }));
  order.sort((a, b) => a.lits - b.lits || a.i - b.i);
  const cubes: (Cube | null)[] = order.map((o) => o.c);
  for (let i = 0; i < cubes.length; i++) {
    const c = cubes[i] as Cube;
    const others: Cube[] = [...D];
    for (let j = 0; j < cubes.length; j++) if (j !== i && cubes[j] !== null) others.push(cubes[j] as Cube);
    cubes[i] = reduceCube(c, others, sp);
  }
  return cubes.filter((c): c is Cube => c !== null);
}

/** The smallest cube containing c minus the union of `others`, or null when that is empty. */
function reduceCube(c: Cube, others: readonly Cube[], sp: Space): Cube | null {
  const cof: Cube[] = [];
  for (const o of others) {
    // Cofactor by c: the part of o inside c, with c's literals freed.
    let disjoint = false;
    const w = sp.w;
    for (let k = 0; k < w; k++) if ((c[k] & o[k] & (c[w + k] ^ o[w + k])) !== 0) disjoint = true;
    if (disjoint) continue;
    const r = universe(sp);
    for (let k = 0; k < w; k++) {
      r[k] = o[k] & ~c[k];
      r[w + k] = o[w + k] & r[k];
    }
    cof.push(r);
  }
  const s = complementSupercube(cof, sp);
  return s === null ? null : intersect(c, s, sp);
}

// ---------------------------------------------------------------------------------------------
// LAST_GASP

/**
 * One more attempt when the loop stalls: reduce every cube independently (each against the
 * unreduced others), expand the reduced cubes aiming to cover other reduced cubes, and add the
 * new primes that cover at least two of them before a final IRREDUNDANT.
 */
export function lastGasp(F: readonly Cube[], D: readonly Cube[], R: FlatCover, sp: Space): Cube[] {
  const scratch = new Uint32Array(R.count * sp.w);
  const reduced: Cube[] = [];
  for (let i = 0; i < F.length; i++) {
    const others = [...F.slice(0, i), ...F.slice(i + 1), ...D];
    const r = reduceCube(F[i], others, sp);
    if (r !== null) reduced.push(r);
  }
  const known = new Set(F.map(cubeKey));
  const extra: Cube[] = [];
  for (let i = 0; i < reduced.length; i++) {
    const rest = reduced.filter((_, j) => j !== i);
    const prime = expandCube(reduced[i], R, rest, sp, scratch);
    let count = 0;
    for (const r of reduced) if (contains(prime, r, sp)) count++;
    const key = cubeKey(prime);
    if (count >= 2 && !known.has(key)) {
      known.add(key);
      extra.push(prime);
    }
  }
  if (extra.length === 0) return [...F];
  return irredundant([...extra, ...F], D, sp);
}
