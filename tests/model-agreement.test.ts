// The compiled model against the reference interpreter: random well-typed machines (widths 1 to 64,
// every operator, signed and unsigned) under random stimuli must agree cycle for cycle.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { simulate } from '../core/model/trace';
import { randomStimulus } from '../core/model/stimulus';
import { fixtureNames, loadFixture } from './support/load';
import { randomMachine } from './support/random-machine';

function agree(m: Parameters<typeof simulate>[0], rows: bigint[][], cycles: number) {
  const a = simulate(m, rows, cycles, 'interpreter');
  const b = simulate(m, rows, cycles, 'compiled');
  for (let c = 0; c < cycles; c++) {
    const x = a[c];
    const y = b[c];
    if (x.state !== y.state || x.fired !== y.fired || x.regs.some((v, i) => v !== y.regs[i]) || x.outputs.some((v, i) => v !== y.outputs[i])) {
      return `cycle ${c}: interpreter ${JSON.stringify([x.state, x.fired, x.regs.map(String), x.outputs.map(String)])} compiled ${JSON.stringify([y.state, y.fired, y.regs.map(String), y.outputs.map(String)])}`;
    }
  }
  return null;
}

describe('compiled model agrees with the interpreter', () => {
  it('on random machines and random stimuli (fast-check, 300 machines x 200 cycles)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 2 ** 31 - 1 }), fc.integer({ min: 0, max: 2 ** 31 - 1 }), (mseed, sseed) => {
        const m = randomMachine(mseed);
        const rows = randomStimulus(m, 200, sseed);
        const problem = agree(m, rows, 200);
        if (problem) throw new Error(`machine seed ${mseed}, stimulus seed ${sseed}: ${problem}`);
      }),
      { numRuns: 300 },
    );
  });

  it('on every demo design over 20,000 random cycles', () => {
    for (const name of fixtureNames()) {
      const { machine } = loadFixture(name);
      expect(agree(machine, randomStimulus(machine, 20_000, 7), 20_000), name).toBeNull();
    }
  });
});
