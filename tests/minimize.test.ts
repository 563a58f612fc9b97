// Two-level minimizer: covers agree with their function on every care point (checked against
// truth tables built independently in tests/minimize-reference.ts), published worked examples,
// the front door's contract (constants, costs, evaluation) and its messages on bad input.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  MinimizeInputError,
  complementCover,
  coverCost,
  cubeContains,
  cubeIntersect,
  evaluateCover,
  isTautology,
  minimize,
  type BoolFunction,
} from '../core/synth/minimize';
import { bruteForceMinimum, coverMismatch, literalsOf, mintermCube, truthTable } from './minimize-reference';

const cubeArb = (n: number): fc.Arbitrary<string> =>
  fc.array(fc.constantFrom('0', '1', '-', '-'), { minLength: n, maxLength: n }).map((a) => a.join(''));

const fnArb = (maxInputs: number): fc.Arbitrary<BoolFunction> =>
  fc.integer({ min: 0, max: maxInputs }).chain((n) =>
    fc.record({
      inputs: fc.constant(n),
      on: fc.array(cubeArb(n), { maxLength: 14 }),
      dc: fc.array(cubeArb(n), { maxLength: 5 }),
    }),
  );

/** Point of the space as a 0/1 array, variable 0 first. */
const pointBits = (p: number, n: number): number[] => Array.from({ length: n }, (_, i) => (p >> i) & 1);

describe('cover correctness on every care point (reference: exhaustive truth table)', () => {
  // The property itself is the definition of a cover of an incompletely specified function:
  // every on-point outside the don't-cares is covered, no off-point is.
  for (const [method, exactLimit] of [
    ['exact', 12],
    ['heuristic', -1],
  ] as const) {
    it(`${method}: random functions up to 10 inputs`, () => {
      fc.assert(
        fc.property(fnArb(10), (f) => {
          const r = minimize(f, { exactLimit });
          expect(r.method).toBe(method);
          expect(coverMismatch(f, r.cover)).toBeNull();
          for (const c of r.cover) expect(c).toMatch(new RegExp(`^[01-]{${f.inputs}}$`));
        }),
        { numRuns: 300, seed: 20240611 },
      );
    });
  }

  it('heuristic covers are prime and irredundant (the output guarantee of the EXPAND/IRREDUNDANT loop, Brayton et al. 1984)', () => {
    // Checked by brute force on truth tables: widening any cube by one literal hits the off-set,
    // and every cube holds a care on-point no other cube holds.
    fc.assert(
      fc.property(fnArb(8), (f) => {
        const r = minimize(f, { exactLimit: -1 });
        const n = f.inputs;
        const on = truthTable(f.on, n);
        const dc = truthTable(f.dc, n);
        const points = 2 ** n;
        const inSet = (t: Uint32Array, p: number): boolean => ((t[p >>> 5] >>> (p & 31)) & 1) === 1;
        for (const [k, cube] of r.cover.entries()) {
          for (let i = 0; i < n; i++) {
            if (cube[i] === '-') continue;
            const wider = truthTable([cube.slice(0, i) + '-' + cube.slice(i + 1)], n);
            let hitsOff = false;
            for (let p = 0; p < points && !hitsOff; p++) if (inSet(wider, p) && !inSet(on, p) && !inSet(dc, p)) hitsOff = true;
            expect(hitsOff, `cube ${cube} can drop literal ${i}`).toBe(true);
          }
          const own = truthTable([cube], n);
          const rest = truthTable(r.cover.filter((_, j) => j !== k), n);
          let needed = false;
          for (let p = 0; p < points && !needed; p++) if (inSet(own, p) && !inSet(rest, p) && inSet(on, p) && !inSet(dc, p)) needed = true;
          expect(needed, `cube ${cube} is redundant`).toBe(true);
        }
      }),
      { numRuns: 200, seed: 77 },
    );
  });
});

describe('more than 32 inputs (several words per cube)', () => {
  it('a function of 8 variables spread over 70 inputs: the cover uses only those 8 and is correct on them', () => {
    // Reference: a prime implicant of a function that ignores a variable never has a literal on
    // it, so the cover projects onto the 8 variables, where the truth table decides correctness.
    const positions = [0, 5, 31, 32, 33, 47, 64, 69];
    const spread = (cube: string): string => {
      const out = Array.from({ length: 70 }, () => '-');
      positions.forEach((p, j) => (out[p] = cube[j]));
      return out.join('');
    };
    fc.assert(
      fc.property(
        fc.record({ on: fc.array(cubeArb(8), { maxLength: 12 }), dc: fc.array(cubeArb(8), { maxLength: 4 }) }),
        ({ on, dc }) => {
          const small = { inputs: 8, on, dc };
          const r = minimize({ inputs: 70, on: on.map(spread), dc: dc.map(spread) });
          expect(r.method).toBe('heuristic');
          for (const c of r.cover) {
            for (let i = 0; i < 70; i++) if (!positions.includes(i)) expect(c[i]).toBe('-');
          }
          const projected = r.cover.map((c) => positions.map((p) => c[p]).join(''));
          expect(coverMismatch(small, projected)).toBeNull();
          const point = Array.from({ length: 70 }, (_, i) => (i % 3 === 0 ? 1 : 0));
          const pointSmall = positions.map((p) => point[p]);
          expect(evaluateCover(r.cover, point)).toBe(evaluateCover(projected, pointSmall));
        },
      ),
      { numRuns: 150, seed: 3232 },
    );
  });
});

describe('published worked examples (minimal costs quoted; each also checked against the brute-force minimum)', () => {
  // Minterm numbers as in the sources: variable A is the most significant bit and variable 0 here.
  const fromMinterms = (n: number, ones: number[], dcs: number[] = []): BoolFunction => ({
    inputs: n,
    on: ones.map((m) => mintermCube(m, n)),
    dc: dcs.map((m) => mintermCube(m, n)),
  });
  const cases: { name: string; source: string; f: BoolFunction; products: number; literals: number }[] = [
    {
      name: 'f(A,B,C,D) = Σm(4,8,10,11,12,15) + d(9,14)',
      // Quoted from memory: the worked example of the Wikipedia article "Quine–McCluskey
      // algorithm"; result BC'D' + AB' + AC (3 terms, 7 literals).
      source: 'Wikipedia, Quine–McCluskey algorithm (from memory)',
      f: fromMinterms(4, [4, 8, 10, 11, 12, 15], [9, 14]),
      products: 3,
      literals: 7,
    },
    {
      name: 'f(A,B,C) = Σm(0,1,2,5,6,7)',
      // Quoted from memory: the cyclic example of the Wikipedia article "Petrick's method";
      // two minimum covers, e.g. A'B' + BC' + AC (3 terms, 6 literals).
      source: "Wikipedia, Petrick's method (from memory)",
      f: fromMinterms(3, [0, 1, 2, 5, 6, 7]),
      products: 3,
      literals: 6,
    },
    {
      name: 'f(A,B,C,D) = Σm(6,8,9,10,11,12,13,14)',
      // Quoted from memory: the example of the Wikipedia article "Karnaugh map";
      // result AC' + AB' + BCD' (3 terms, 7 literals).
      source: 'Wikipedia, Karnaugh map (from memory)',
      f: fromMinterms(4, [6, 8, 9, 10, 11, 12, 13, 14]),
      products: 3,
      literals: 7,
    },
    {
      name: 'BCD to seven-segment, segment a, codes 10..15 unused',
      // Quoted from memory: the standard textbook result a = A + C + BD + B'D' (4 terms, 6 literals),
      // e.g. M. Morris Mano, Digital Design, the BCD-to-seven-segment decoder exercise solution.
      source: 'digital design textbooks, BCD-to-7-segment decoder (from memory)',
      f: fromMinterms(4, [0, 2, 3, 5, 6, 7, 8, 9], [10, 11, 12, 13, 14, 15]),
      products: 4,
      literals: 6,
    },
    {
      name: '4-input odd parity',
      // Common knowledge: no two on-points of a parity function are adjacent, so every minterm is
      // an essential prime: 8 terms of 4 literals.
      source: 'parity function property (common knowledge)',
      f: fromMinterms(4, [1, 2, 4, 7, 8, 11, 13, 14]),
      products: 8,
      literals: 32,
    },
    {
      name: '3-input majority',
      // Common knowledge: AB + AC + BC.
      source: 'majority function (common knowledge)',
      f: fromMinterms(3, [3, 5, 6, 7]),
      products: 3,
      literals: 6,
    },
  ];
  for (const c of cases) {
    it(`${c.name} [${c.source}]`, () => {
      const brute = bruteForceMinimum(c.f);
      expect(brute).toEqual({ products: c.products, literals: c.literals });
      const exact = minimize(c.f);
      expect(exact.method).toBe('exact');
      expect(coverMismatch(c.f, exact.cover)).toBeNull();
      expect([exact.cost.products, exact.cost.literals]).toEqual([c.products, c.literals]);
      const heuristic = minimize(c.f, { exactLimit: -1 });
      expect(coverMismatch(c.f, heuristic.cover)).toBeNull();
      expect([heuristic.cost.products, heuristic.cost.literals]).toEqual([c.products, c.literals]);
    });
  }
});

describe('front door contract', () => {
  it('constant 0 is the empty cover and constant 1 the all-dash cube (definitions of the brief)', () => {
    expect(minimize({ inputs: 3, on: [], dc: ['1--'] }).cover).toEqual([]);
    expect(minimize({ inputs: 3, on: ['1-0'], dc: ['1-0'] }).cover).toEqual([]); // on-points all don't-care
    const one = minimize({ inputs: 3, on: ['1--', '0-1'], dc: ['0-0'] });
    expect(one.cover).toEqual(['---']);
    expect(one.cost).toEqual({ products: 1, literals: 0, gates2: 0 });
    const oneH = minimize({ inputs: 20, on: ['1' + '-'.repeat(19), '0' + '-'.repeat(19)], dc: [] });
    expect(oneH.method).toBe('heuristic');
    expect(oneH.cover).toEqual(['-'.repeat(20)]);
    expect(minimize({ inputs: 0, on: [''], dc: [] }).cover).toEqual(['']);
    expect(minimize({ inputs: 0, on: [], dc: [] }).cover).toEqual([]);
  });

  it('on/dc overlap is treated as don\u2019t-care', () => {
    // on = a, dc = ab: the point a=1,b=1 may be dropped, the point a=1,b=0 must stay.
    const r = minimize({ inputs: 2, on: ['1-'], dc: ['11'] });
    expect(r.cover).toEqual(['1-']);
    // on = {11, 00}, dc = {11}: 11 need not be covered, so the single cube 00 suffices.
    const r2 = minimize({ inputs: 2, on: ['11', '00'], dc: ['11'] });
    expect(r2.cover).toEqual(['00']);
  });

  it('coverCost counts 2-input gates with complemented literals free', () => {
    // Hand count: x1'x2 + x0x1x2' + x2 → literals 2+3+1 = 6; ANDs (2-1)+(3-1)+0 = 3; ORs 3-1 = 2.
    expect(coverCost(['-01', '110', '--1'])).toEqual({ products: 3, literals: 6, gates2: 5 });
    expect(coverCost([])).toEqual({ products: 0, literals: 0, gates2: 0 });
    expect(coverCost(['---'])).toEqual({ products: 1, literals: 0, gates2: 0 });
  });

  it('evaluateCover agrees with the reference truth table at every point', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 7 }).chain((n) => fc.tuple(fc.constant(n), fc.array(cubeArb(n), { maxLength: 6 }))),
        ([n, cover]) => {
          const t = truthTable(cover, n);
          for (let p = 0; p < 2 ** n; p++) {
            const want = ((t[p >>> 5] >>> (p & 31)) & 1) === 1;
            const bits = pointBits(p, n);
            expect(evaluateCover(cover, bits)).toBe(want);
            expect(evaluateCover(cover, bits.join(''))).toBe(want);
          }
        },
      ),
      { numRuns: 200, seed: 5 },
    );
  });

  it('cube helpers agree with point sets (reference: truth tables)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 7 }).chain((n) => fc.tuple(fc.constant(n), cubeArb(n), cubeArb(n), fc.array(cubeArb(n), { maxLength: 8 }))),
        ([n, a, b, cover]) => {
          const ta = truthTable([a], n);
          const tb = truthTable([b], n);
          const both = ta.map((x, i) => x & tb[i]);
          expect(cubeContains(a, b)).toBe(tb.every((x, i) => (x & ~ta[i]) === 0));
          const meet = cubeIntersect(a, b);
          expect(meet === null ? new Uint32Array(both.length) : truthTable([meet], n)).toEqual(both);
          const comp = complementCover(cover, n);
          const tc = truthTable(cover, n);
          const tcomp = truthTable(comp, n);
          const mask = n >= 5 ? 0xffffffff : (1 << (2 ** n)) - 1;
          for (let i = 0; i < tc.length; i++) expect((tc[i] ^ tcomp[i] ^ mask) >>> 0).toBe(0); // disjoint and together everything
          expect(isTautology(cover, n)).toBe(tc.every((x) => x >>> 0 === mask >>> 0));
        },
      ),
      { numRuns: 400, seed: 11 },
    );
  });

  it('the exact method reports why it gave up and the heuristic answers', () => {
    // 10-variable odd parity has 512 essential primes; with a tiny prime budget exact must give up.
    const ones: string[] = [];
    for (let p = 0; p < 1024; p++) {
      const bits = pointBits(p, 10);
      if (bits.reduce((a, b) => a + b, 0) % 2 === 1) ones.push(bits.join(''));
    }
    const f = { inputs: 10, on: ones, dc: [] };
    const r = minimize(f, { exactLimits: { maxPrimes: 100 } });
    expect(r.method).toBe('heuristic');
    expect(r.note).toMatch(/more than 100 prime implicants/);
    expect(coverMismatch(f, r.cover)).toBeNull();
    expect(r.cost.products).toBe(512); // parity property, as above
    expect(r.cover.every((c) => literalsOf(c) === 10)).toBe(true);
  });
});

describe('bad input gives a clear message naming where and what', () => {
  const cases: [string, unknown, RegExp][] = [
    ['wrong character', { inputs: 3, on: ['01x'], dc: [] }, /on\[0\] = '01x' has "x" at position 2/],
    ['wrong length', { inputs: 3, on: ['01-'], dc: ['0-'] }, /dc\[0\] = '0-' has 2 characters but the function has 3 inputs/],
    ['negative inputs', { inputs: -1, on: [], dc: [] }, /inputs is the number -1/],
    ['fractional inputs', { inputs: 2.5, on: [], dc: [] }, /inputs is the number 2.5/],
    ['missing dc', { inputs: 2, on: ['01'] }, /dc is missing, expected an array/],
    ['non-string cube', { inputs: 2, on: [12], dc: [] }, /on\[0\] is the number 12/],
    ['not an object', null, /the function is null/],
  ];
  for (const [what, f, message] of cases) {
    it(what, () => {
      expect(() => minimize(f as BoolFunction)).toThrow(MinimizeInputError);
      expect(() => minimize(f as BoolFunction)).toThrow(message);
    });
  }
  it('bad options and helper arguments', () => {
    expect(() => minimize({ inputs: 2, on: [], dc: [] }, { exactLimit: 1.5 })).toThrow(/options.exactLimit is 1.5/);
    expect(() => evaluateCover(['01'], [0, 2])).toThrow(/assignment\[1\] is 2, expected 0 or 1/);
    expect(() => evaluateCover(['011'], '01')).toThrow(/cover\[0\] = '011' has 3 characters/);
    expect(() => coverCost(['0a'])).toThrow(/cover\[0\] = '0a' has "a" at position 1/);
    expect(() => cubeContains('01', '0')).toThrow(/cubeContains\[1\] = '0' has 1 characters/);
  });
});
