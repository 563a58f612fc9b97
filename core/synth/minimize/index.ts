// Front door of the two-level minimizer used by controller synthesis: picks the exact method for
// small functions and the Espresso-style heuristic otherwise, and reports the cost of a cover.

import { type BoolFunction, type CubeString, MinimizeInputError, checkFunction, cubeProblem, encodeAll } from './cube';
import { DEFAULT_EXACT_LIMITS, type ExactLimits, exactMinimize } from './exact';
import { heuristicMinimize } from './heuristic';
import { decode, makeSpace } from './positional';

export { type BoolFunction, type CubeString, MinimizeInputError, checkFunction, complementCover, cubeContains, cubeIntersect, isTautology } from './cube';
export { DEFAULT_EXACT_LIMITS, type ExactLimits } from './exact';

/**
 * Size of a two-level AND-OR realization. `gates2` counts 2-input gates: (literals - 1) ANDs per
 * product and (products - 1) ORs. Complemented literals are counted as free, because the
 * flip-flops and input registers feeding a controller offer both polarities.
 */
export interface CoverCost {
  products: number;
  literals: number;
  gates2: number;
}

export interface MinimizeOptions {
  /** Largest input count for which the exact method is tried (default 12); negative disables it. */
  exactLimit?: number;
  /** Finer limits of the exact method; when one is hit the heuristic answers instead. */
  exactLimits?: Partial<ExactLimits>;
}

export interface MinimizeResult {
  /** Sum-of-products cover, cubes in ascending string order. */
  cover: CubeString[];
  method: 'exact' | 'heuristic';
  cost: CoverCost;
  /** Why the exact method was not used, when it was eligible by input count but gave up. */
  note?: string;
}

export const DEFAULT_EXACT_LIMIT = 12;

/**
 * Minimize a single-output function with don't-cares: fewest product terms, then fewest literals.
 * Constant 0 gives the empty cover; constant 1 the single all-'-' cube. Throws
 * MinimizeInputError naming every malformed field or cube.
 */
export function minimize(f: BoolFunction, options: MinimizeOptions = {}): MinimizeResult {
  const problems = checkFunction(f);
  const exactLimit = options.exactLimit ?? DEFAULT_EXACT_LIMIT;
  if (!Number.isInteger(exactLimit)) problems.push(`options.exactLimit is ${String(exactLimit)}, expected a whole number`);
  const limits: ExactLimits = { ...DEFAULT_EXACT_LIMITS, maxInputs: Math.max(0, exactLimit), ...options.exactLimits };
  for (const [key, value] of Object.entries(limits)) {
    if (typeof value !== 'number' || !(value >= 0)) problems.push(`exact limit ${key} is ${String(value)}, expected a number >= 0`);
  }
  if (problems.length > 0) throw new MinimizeInputError(problems);

  const sp = makeSpace(f.inputs);
  const on = encodeAll(f.on, sp);
  const dc = encodeAll(f.dc, sp);
  // The heuristic runs first in every case: its cover bounds the exact search from the start.
  const heuristic = heuristicMinimize(on, dc, sp);
  let note: string | undefined;
  if (f.inputs <= exactLimit) {
    const outcome = exactMinimize(on, dc, sp, limits, heuristic);
    if ('cover' in outcome) return finish(outcome.cover.map((c) => decode(c, sp)), 'exact');
    note = `exact method gave up: ${outcome.tooLarge}`;
  }
  return finish(heuristic.map((c) => decode(c, sp)), 'heuristic', note);
}

function finish(cover: CubeString[], method: 'exact' | 'heuristic', note?: string): MinimizeResult {
  const sorted = [...cover].sort();
  const result: MinimizeResult = { cover: sorted, method, cost: coverCost(sorted) };
  if (note !== undefined) result.note = note;
  return result;
}

/** Product terms, literals and 2-input gate count of a sum-of-products cover. */
export function coverCost(cover: readonly CubeString[]): CoverCost {
  const problems: string[] = [];
  let literals = 0;
  let gates2 = 0;
  cover.forEach((cube, i) => {
    const p = typeof cube === 'string' ? cubeProblem(cube, cube.length, `cover[${i}]`) : `cover[${i}] is not a string`;
    if (p !== null) {
      problems.push(p);
      return;
    }
    let lits = 0;
    for (const ch of cube) if (ch !== '-') lits++;
    literals += lits;
    gates2 += Math.max(0, lits - 1);
  });
  if (problems.length > 0) throw new MinimizeInputError(problems);
  gates2 += Math.max(0, cover.length - 1);
  return { products: cover.length, literals, gates2 };
}

/**
 * Value of a sum-of-products cover at one input assignment, given as an array of 0/1 (or
 * booleans) or a string of '0'/'1', variable 0 first.
 */
export function evaluateCover(cover: readonly CubeString[], assignment: readonly (number | boolean)[] | string): boolean {
  const bits: number[] = [];
  for (let i = 0; i < assignment.length; i++) {
    const a = assignment[i];
    if (a === 1 || a === true || a === '1') bits.push(1);
    else if (a === 0 || a === false || a === '0') bits.push(0);
    else throw new MinimizeInputError([`assignment[${i}] is ${JSON.stringify(a)}, expected 0 or 1`]);
  }
  for (let k = 0; k < cover.length; k++) {
    const p = cubeProblem(cover[k], bits.length, `cover[${k}]`);
    if (p !== null) throw new MinimizeInputError([`${p} (the assignment has ${bits.length} values)`]);
  }
  return cover.some((cube) => {
    for (let i = 0; i < bits.length; i++) {
      const ch = cube[i];
      if ((ch === '0' && bits[i] !== 0) || (ch === '1' && bits[i] !== 1)) return false;
    }
    return true;
  });
}
