// IRREDUNDANT step of the heuristic: drop cubes the rest of the cover makes redundant, choosing
// which partially redundant cubes to keep by a small covering problem, as Espresso does.

import { type Cube, type Space, cofactorCover, isUniverse, literalCount, literalCube } from './positional';
import { solveCover } from './covering';
import { columns, coversCube, splitVariable } from './unate';

/** Leaves generated per call before the covering formulation is abandoned for the greedy one. */
const MAX_LEAVES = 20_000;
/** Work budget of the covering step (matrix entries visited). */
const MAX_COVER_WORK = 2_000_000;

/**
 * Remove redundant cubes from F (D is the don't-care cover). Cubes not covered by the other
 * cubes with D are relatively essential and stay; cubes covered by those alone (with D) are
 * totally redundant and go. For the partially redundant rest, each one's coverage is split into
 * regions each lying inside single cubes, giving rows "keep one of these"; a minimum cover of
 * those rows (fewest cubes, then fewest literals) decides what stays.
 */
export function irredundant(F: readonly Cube[], D: readonly Cube[], sp: Space): Cube[] {
  const essential: Cube[] = [];
  const rest: Cube[] = [];
  for (let i = 0; i < F.length; i++) {
    const others = [...F.slice(0, i), ...F.slice(i + 1), ...D];
    if (coversCube(others, F[i], sp)) rest.push(F[i]);
    else essential.push(F[i]);
  }
  const base = [...essential, ...D];
  const partial = rest.filter((c) => !coversCube(base, c, sp));
  if (partial.length <= 1) return [...essential, ...partial]; // a lone partially redundant cube is needed
  const chosen = minimumKeep(partial, base, sp) ?? greedyKeep(partial, base, sp);
  return [...essential, ...chosen];
}

/** Covering formulation; null when it grows past its limits. */
function minimumKeep(partial: readonly Cube[], base: readonly Cube[], sp: Space): Cube[] | null {
  const rows: number[][] = [];
  const seen = new Set<string>();
  const budget = { leaves: MAX_LEAVES };
  for (let p = 0; p < partial.length; p++) {
    const cubes: Cube[] = [];
    const tags: number[] = [];
    for (const b of base) {
      cubes.push(b);
      tags.push(-1);
    }
    partial.forEach((q, j) => {
      if (j !== p) {
        cubes.push(q);
        tags.push(j);
      }
    });
    const pRows: number[][] = [];
    const target = partial[p];
    const cof: Cube[] = [];
    const cofTags: number[] = [];
    cubes.forEach((c, i) => {
      const r = cofactorCover([c], target, sp);
      if (r.length === 1) {
        cof.push(r[0]);
        cofTags.push(tags[i]);
      }
    });
    if (!leafRows(cof, cofTags, sp, pRows, budget)) return null;
    for (const row of pRows) {
      row.push(p);
      row.sort((a, b) => a - b);
      const key = row.join(',');
      if (!seen.has(key)) {
        seen.add(key);
        rows.push(row);
      }
    }
  }
  const colRows: number[][] = partial.map(() => []);
  rows.forEach((row, r) => {
    for (const c of row) colRows[c].push(r);
  });
  const perCube = sp.n * (partial.length + 1) + 1;
  const cost = partial.map((c) => perCube + literalCount(c, sp));
  const result = solveCover({ rowCols: rows, colRows, cost }, MAX_COVER_WORK);
  if (result.kind !== 'optimal') return null;
  return result.cols.map((c) => partial[c]);
}

/**
 * Split the (cofactored) cover until every region contains a whole cube. A region inside a base
 * cube needs nothing; otherwise it yields the row of partially redundant cubes containing it.
 * False when the region count passes the budget or a region turns out uncovered.
 */
function leafRows(cubes: Cube[], tags: number[], sp: Space, rows: number[][], budget: { leaves: number }): boolean {
  if (--budget.leaves < 0) return false;
  const whole: number[] = [];
  for (let i = 0; i < cubes.length; i++) {
    if (!isUniverse(cubes[i], sp)) continue;
    if (tags[i] < 0) return true;
    whole.push(tags[i]);
  }
  if (whole.length > 0) {
    rows.push(whole);
    return true;
  }
  if (cubes.length === 0) return false;
  const { v } = splitVariable(columns(cubes, sp), sp);
  if (v < 0) return false;
  for (const positive of [false, true]) {
    const lit = literalCube(sp, v, positive);
    const sub: Cube[] = [];
    const subTags: number[] = [];
    cubes.forEach((c, i) => {
      const r = cofactorCover([c], lit, sp);
      if (r.length === 1) {
        sub.push(r[0]);
        subTags.push(tags[i]);
      }
    });
    if (!leafRows(sub, subTags, sp, rows, budget)) return false;
  }
  return true;
}

/** Fallback: drop partially redundant cubes one at a time, most literals first, while still covered. */
function greedyKeep(partial: readonly Cube[], base: readonly Cube[], sp: Space): Cube[] {
  const order = [...partial].sort((a, b) => literalCount(b, sp) - literalCount(a, sp));
  const keep = order.map(() => true);
  for (let i = 0; i < order.length; i++) {
    const others = [...base];
    for (let j = 0; j < order.length; j++) if (j !== i && keep[j]) others.push(order[j]);
    if (coversCube(others, order[i], sp)) keep[i] = false;
  }
  return order.filter((_, i) => keep[i]);
}
