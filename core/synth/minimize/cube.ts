// Data model of the two-level minimizer: cubes as '0'/'1'/'-' strings and single-output functions
// given by on-set and don't-care set covers, with validation and the basic cube/cover operations.

import { type Cube, type Space, contains, decode, encode, intersect, makeSpace } from './positional';
import { complement, tautology } from './unate';

/**
 * A product term over n variables: character i is '0' (variable i complemented), '1' (variable i
 * true) or '-' (variable i absent). Variable 0 is the leftmost character.
 */
export type CubeString = string;

/**
 * A single-output Boolean function with don't-cares. `on` and `dc` are covers that may overlap
 * each other and themselves. Where a point lies in both, it is a don't-care: the minimizer may
 * cover it or not. (Chosen so that a caller can mark a whole region as "don't care" without
 * first carving it out of the on-set.) Every point in neither set belongs to the off-set.
 */
export interface BoolFunction {
  inputs: number;
  on: CubeString[];
  dc: CubeString[];
}

/** Thrown by the minimizer front door when a function is malformed; the message lists every problem. */
export class MinimizeInputError extends Error {
  readonly problems: string[];
  constructor(problems: string[]) {
    super(`invalid Boolean function: ${problems.join('; ')}`);
    this.name = 'MinimizeInputError';
    this.problems = problems;
  }
}

/** Problem with one cube string, or null when it is well formed for `inputs` variables. */
export function cubeProblem(cube: unknown, inputs: number, where: string): string | null {
  if (typeof cube !== 'string') return `${where} is ${describe(cube)}, expected a string of '0', '1' and '-'`;
  if (cube.length !== inputs) return `${where} = '${clip(cube)}' has ${cube.length} characters but the function has ${inputs} inputs`;
  for (let i = 0; i < cube.length; i++) {
    const ch = cube[i];
    if (ch !== '0' && ch !== '1' && ch !== '-') {
      return `${where} = '${clip(cube)}' has ${JSON.stringify(ch)} at position ${i}; only '0', '1' and '-' are allowed`;
    }
  }
  return null;
}

/** Every problem with a function description; an empty list means it is well formed. */
export function checkFunction(f: unknown): string[] {
  if (typeof f !== 'object' || f === null) return [`the function is ${describe(f)}, expected { inputs, on, dc }`];
  const g = f as Record<string, unknown>;
  const problems: string[] = [];
  const inputs = g.inputs;
  const inputsOk = typeof inputs === 'number' && Number.isInteger(inputs) && inputs >= 0;
  if (!inputsOk) problems.push(`inputs is ${describe(inputs)}, expected a whole number >= 0`);
  for (const field of ['on', 'dc'] as const) {
    const list = g[field];
    if (!Array.isArray(list)) {
      problems.push(`${field} is ${describe(list)}, expected an array of cube strings`);
      continue;
    }
    if (!inputsOk) continue;
    for (let i = 0; i < list.length; i++) {
      const p = cubeProblem(list[i], inputs as number, `${field}[${i}]`);
      if (p !== null) problems.push(p);
      if (problems.length >= 20) {
        problems.push('further problems not listed');
        return problems;
      }
    }
  }
  return problems;
}

function describe(x: unknown): string {
  if (x === null) return 'null';
  if (Array.isArray(x)) return 'an array';
  if (typeof x === 'string') return `the string '${clip(x)}'`;
  if (typeof x === 'number') return `the number ${x}`;
  return typeof x === 'undefined' ? 'missing' : `a ${typeof x}`;
}

function clip(s: string): string {
  return s.length > 40 ? `${s.slice(0, 37)}...` : s;
}

/** Shared check for the string-level helpers: all cubes well formed over the same width. */
function spaceOf(cubes: readonly unknown[], inputs: number | undefined, what: string): Space {
  const n = inputs ?? (typeof cubes[0] === 'string' ? (cubes[0] as string).length : 0);
  if (!Number.isInteger(n) || n < 0) throw new MinimizeInputError([`${what}: inputs is ${describe(n)}, expected a whole number >= 0`]);
  const problems: string[] = [];
  cubes.forEach((c, i) => {
    const p = cubeProblem(c, n, `${what}[${i}]`);
    if (p !== null) problems.push(p);
  });
  if (problems.length > 0) throw new MinimizeInputError(problems);
  return makeSpace(n);
}

/** True when every point of cube b lies in cube a. */
export function cubeContains(a: CubeString, b: CubeString): boolean {
  const sp = spaceOf([a, b], undefined, 'cubeContains');
  return contains(encode(a, sp), encode(b, sp), sp);
}

/** The common part of two cubes, or null when they share no point. */
export function cubeIntersect(a: CubeString, b: CubeString): CubeString | null {
  const sp = spaceOf([a, b], undefined, 'cubeIntersect');
  const c = intersect(encode(a, sp), encode(b, sp), sp);
  return c === null ? null : decode(c, sp);
}

/** A cover of every point not covered by `cover` (recursive Shannon expansion, unate shortcuts). */
export function complementCover(cover: readonly CubeString[], inputs: number): CubeString[] {
  const sp = spaceOf(cover, inputs, 'complementCover');
  return complement(encodeAll(cover, sp), sp).map((c) => decode(c, sp));
}

/** True when the cover contains every point of the space (unate recursion). */
export function isTautology(cover: readonly CubeString[], inputs: number): boolean {
  const sp = spaceOf(cover, inputs, 'isTautology');
  return tautology(encodeAll(cover, sp), sp);
}

export function encodeAll(cover: readonly CubeString[], sp: Space): Cube[] {
  return cover.map((s) => encode(s, sp));
}
