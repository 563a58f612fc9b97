// Exact minimization is optimal: its cost equals the brute-force minimum over all sets of
// implicants (tests/minimize-reference.ts). The heuristic stays close to the exact cost.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { minimize, type BoolFunction } from '../core/synth/minimize';
import { DEFAULT_EXACT_LIMITS, exactMinimize } from '../core/synth/minimize/exact';
import { decode, encode, makeSpace } from '../core/synth/minimize/positional';
import { SeededRandom } from '../core/util/prng';
import { bruteForceMinimum, coverMismatch, randomCubeFunction, randomTableFunction, type Fn } from './minimize-reference';

const cubeArb = (n: number): fc.Arbitrary<string> =>
  fc.array(fc.constantFrom('0', '1', '-'), { minLength: n, maxLength: n }).map((a) => a.join(''));

/** Functions given by cubes, or by a full truth table (each point on / off / don't-care). */
const smallFnArb: fc.Arbitrary<BoolFunction> = fc.oneof(
  fc.integer({ min: 1, max: 5 }).chain((n) =>
    fc.record({ inputs: fc.constant(n), on: fc.array(cubeArb(n), { maxLength: 10 }), dc: fc.array(cubeArb(n), { maxLength: 3 }) }),
  ),
  fc.integer({ min: 1, max: 5 }).chain((n) =>
    fc.array(fc.constantFrom(0, 0, 1, 1, 2), { minLength: 2 ** n, maxLength: 2 ** n }).map((kinds) => {
      const f: BoolFunction = { inputs: n, on: [], dc: [] };
      kinds.forEach((k, p) => {
        const cube = Array.from({ length: n }, (_, i) => ((p >> i) & 1 ? '1' : '0')).join('');
        if (k === 1) f.on.push(cube);
        if (k === 2) f.dc.push(cube);
      });
      return f;
    }),
  ),
);

describe('exact method against the brute-force minimum', () => {
  it('random functions of 1 to 5 inputs: same (products, literals) as the brute force', () => {
    fc.assert(
      fc.property(smallFnArb, (f) => {
        const r = minimize(f);
        expect(r.method).toBe('exact');
        expect(coverMismatch(f, r.cover)).toBeNull();
        expect({ products: r.cost.products, literals: r.cost.literals }).toEqual(bruteForceMinimum(f));
      }),
      { numRuns: 400, seed: 424242 },
    );
  });

  it('the tabular method and covering search alone (no heuristic cover as a starting bound) reach the same minimum', () => {
    fc.assert(
      fc.property(smallFnArb, (f) => {
        const sp = makeSpace(f.inputs);
        const out = exactMinimize(
          f.on.map((c) => encode(c, sp)),
          f.dc.map((c) => encode(c, sp)),
          sp,
          DEFAULT_EXACT_LIMITS,
        );
        if (!('cover' in out)) throw new Error(out.tooLarge);
        const cover = out.cover.map((c) => decode(c, sp));
        expect(coverMismatch(f, cover)).toBeNull();
        const literals = cover.reduce((s, c) => s + [...c].filter((ch) => ch !== '-').length, 0);
        expect({ products: cover.length, literals }).toEqual(bruteForceMinimum(f));
      }),
      { numRuns: 400, seed: 515151 },
    );
  });
});

describe('heuristic against exact', () => {
  it('within 10% of the exact cost in products and in literals over many random functions', () => {
    const rng = new SeededRandom(2024);
    const totals = { exactP: 0, exactL: 0, heurP: 0, heurL: 0, both: 0, skipped: 0 };
    let worst = { ratio: 1, exact: 0, heuristic: 0, inputs: 0 };
    for (let t = 0; t < 240; t++) {
      const n = 4 + rng.below(7);
      let f: Fn;
      if (t % 3 === 0) f = randomTableFunction(rng, n, rng.float() * 0.6, rng.float() * 0.3);
      else f = randomCubeFunction(rng, n, 1 + rng.below(4 * n), rng.below(n), 0.2 + rng.float() * 0.4);
      // A small work budget: functions whose covering search is long are simply left out.
      const exact = minimize(f, { exactLimit: 12, exactLimits: { maxWork: 2_000_000 } });
      const heur = minimize(f, { exactLimit: -1 });
      expect(coverMismatch(f, heur.cover)).toBeNull();
      if (exact.method !== 'exact') {
        totals.skipped++;
        continue;
      }
      totals.both++;
      totals.exactP += exact.cost.products;
      totals.exactL += exact.cost.literals;
      totals.heurP += heur.cost.products;
      totals.heurL += heur.cost.literals;
      // Per function: at most one extra term or 15%, whichever is more. (On
      // {"inputs":4,"on":["0000","1000","0100","1010","0110","1110","1001"],"dc":["1011","1111"]}
      // the Berkeley Espresso program, like this heuristic, returns 4 terms where 3 suffice.)
      expect(heur.cost.products).toBeLessThanOrEqual(exact.cost.products + Math.max(1, Math.ceil(0.15 * exact.cost.products)));
      if (exact.cost.products > 0) {
        const ratio = heur.cost.products / exact.cost.products;
        if (ratio > worst.ratio) worst = { ratio, exact: exact.cost.products, heuristic: heur.cost.products, inputs: n };
      }
    }
    const pRatio = totals.heurP / totals.exactP;
    const lRatio = totals.heurL / totals.exactL;
    console.log(
      `heuristic/exact over ${totals.both} functions (${totals.skipped} too large for exact): products ${pRatio.toFixed(4)}, ` +
        `literals ${lRatio.toFixed(4)}; worst single function ${worst.heuristic}/${worst.exact} products = ${worst.ratio.toFixed(3)} (${worst.inputs} inputs)`,
    );
    expect(totals.both).toBeGreaterThan(200);
    expect(pRatio).toBeLessThanOrEqual(1.1);
    expect(lRatio).toBeLessThanOrEqual(1.1);
  });
});
