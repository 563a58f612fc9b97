// Diagnosis hints on boards built in the test with one kind of trouble each: the hint for that trouble
// appears (worded as a hypothesis, naming the signal or input), and the hints for the others do not.
import { describe, expect, it } from 'vitest';
import { randomStimulus } from '../core/model/stimulus';
import type { HintVerdict, Verdict } from '../core/compare/verdict';
import { compare, design, divergences, probeStream, runBoard } from './compare-frames';

const hints = (vs: Verdict[]) => vs.filter((v): v is HintVerdict => v.kind === 'hint');

describe('diagnosis hints', () => {
  it('a register that misses the reset: divergence at cycle 0 explained by the reset, and the reset hint', () => {
    const d = design('tank_dosing');
    const rows = randomStimulus(d.m, 300, 1);
    const vs = compare(d, probeStream(d.layout, runBoard(d, rows, [{ kind: 'no-reset', reg: 'runs', value: 77n }])));
    const ds = divergences(vs);
    expect(ds[0]).toMatchObject({ cycle: 0, signal: 'reg.runs', expected: '0', actual: '77', transition: { from: 'reset' } });
    expect(ds[0].explanation).toMatch(/after reset runs should hold its reset value 0/);
    expect(hints(vs).map((h) => h.cause)).toEqual(['reset']);
    expect(hints(vs)[0].text).toMatch(/suggest a reset problem: the reset pin polarity/);
  });

  it('isolated single-bit upsets in different registers: the sporadic-flips hint, not a stuck bit', () => {
    const d = design('tank_dosing');
    const rows = randomStimulus(d.m, 2000, 2);
    // runs is loaded only in Finish; upsets of target and runs last until the next load, so each shows once.
    const flips = [
      { kind: 'flip' as const, reg: 'runs', bit: 3, at: 300 },
      { kind: 'flip' as const, reg: 'target', bit: 5, at: 900 },
      { kind: 'flip' as const, reg: 'runs', bit: 9, at: 1500 },
    ];
    const vs = compare(d, probeStream(d.layout, runBoard(d, rows, flips)));
    const ds = divergences(vs);
    expect(ds.map((v) => [v.cycle, v.signal, v.differingBits])).toEqual([
      [300, 'reg.runs', [3]],
      [900, 'reg.target', [5]],
      [1500, 'reg.runs', [9]],
    ]);
    const hs = hints(vs);
    expect(hs.map((h) => h.cause)).toEqual(['sporadic-flips']);
    expect(hs[0].evidence).toMatch(/^3 isolated single-bit divergent cycles \(1500\.0 per million compared cycles\)/);
  });

  it('divergences right where a rarely changing input without a synchronizer changes: the input-timing hint names it', () => {
    const d = design('tank_dosing');
    // abort is declared `synced` (no synchronizer). Let it change only a few times in a long run.
    const abort = d.m.inputs.findIndex((i) => i.name === 'abort');
    const rows = randomStimulus(d.m, 3000, 3).map((r, k) => r.map((v, i) => (i === abort ? (Math.floor(k / 500) % 2 === 1 ? 1n : 0n) : v)));
    const changes = [500, 1000, 1500, 2000, 2500];
    const board = runBoard(d, rows);
    // At each change the board takes a step the model does not (a state other than the one it computed).
    const faults = changes.map((k) => ({ kind: 'jump' as const, at: k, to: (board[k].computedNext + 1) % d.m.states.length }));
    const vs = compare(d, probeStream(d.layout, runBoard(d, rows, faults)));
    expect(divergences(vs).map((v) => v.cycle)).toEqual(changes.map((k) => k + 1));
    const h = hints(vs).find((x) => x.cause === 'input-timing');
    expect(h?.text).toMatch(/coincide with changes of 'abort', which is declared synchronous \(no synchronizer\)/);
    expect(h?.evidence).toMatch(/^5 of 5 divergent cycles follow a change of abort/);
    // go_btn changes in about half of all cycles: coincidences with it are not evidence.
    expect(hints(vs).some((x) => x.text.includes("'go_btn'"))).toBe(false);
  });
});
