// Controller/datapath synthesis checked against independent references: the IR cycle semantics
// (evalExpr, written out in synth-reference.ts), the definition of a sum of products, and the
// textbook definitions of the binary, reflected binary (Gray) and one-hot codes.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { compareEncodings, synthesize } from '../core/synth/index';
import { SynthesisSchema, type EncodingKind, type Synthesis } from '../core/synth/schema';
import { bitsForStates, grayCode, unusedCodeCubes } from '../core/synth/encode';
import type { Machine } from '../core/ir/schema';
import {
  coverHolds,
  designArb,
  equationsVersusTable,
  fixtureMachines,
  machineFromText,
  reachableStates,
  renderDesign,
  simulateAgainstIr,
  type DesignShape,
} from './synth-reference';

function synth(m: Machine, encoding: EncodingKind, shareUnits = false): Synthesis {
  const r = synthesize(m, { encoding, shareUnits });
  if (!r.ok) throw new Error(`synthesis failed: ${r.error}`);
  return r.result;
}

function encodingsFor(m: Machine): EncodingKind[] {
  return m.states.every((s) => s.code !== null) ? ['binary', 'gray', 'onehot', 'custom'] : ['binary', 'gray', 'onehot'];
}

const FIXTURES = fixtureMachines();

describe('fixtures: equations against the transition table and the IR semantics', () => {
  it('finds the fixtures', () => {
    expect(FIXTURES.length).toBeGreaterThan(0);
  });
  for (const { file, machine } of FIXTURES) {
    for (const encoding of encodingsFor(machine)) {
      for (const share of [false, true]) {
        it(`${file}, ${encoding}${share ? ', shared units' : ''}`, () => {
          const s = synth(machine, encoding, share);
          // The JSON shape is the declared schema.
          expect(SynthesisSchema.safeParse(JSON.parse(JSON.stringify(s))).success).toBe(true);
          // Every care point: each minimized equation gives the table's value (definition of a cover).
          expect(equationsVersusTable(s, s.equations)).toEqual([]);
          // Controller by its equations + datapath by its multiplexers, against the IR evaluated directly.
          expect(simulateAgainstIr(machine, s, s.equations, 1500, 11)).toEqual([]);
          if (s.fullDecode) {
            expect(equationsVersusTable(s, s.fullDecode)).toEqual([]);
            expect(simulateAgainstIr(machine, s, s.fullDecode, 1500, 12)).toEqual([]);
          }
        });
      }
    }
  }
});

const SMALL: DesignShape = { maxStates: 6, maxBitInputs: 4, maxTransitions: 3 };

describe('random machines (fast-check)', () => {
  it('every encoding: equations equal the table on all care points and simulate like the IR', () => {
    fc.assert(
      fc.property(designArb(SMALL), (spec) => {
        const m = machineFromText(renderDesign(spec, SMALL));
        for (const encoding of encodingsFor(m)) {
          const s = synth(m, encoding, spec.nStates % 2 === 0);
          const problems = [...equationsVersusTable(s, s.equations), ...simulateAgainstIr(m, s, s.equations, 150, spec.nStates)];
          if (s.fullDecode) problems.push(...equationsVersusTable(s, s.fullDecode));
          if (problems.length) throw new Error(`${encoding}: ${problems.slice(0, 3).join('\n')}\n${renderDesign(spec, SMALL)}`);
        }
      }),
      { numRuns: 60, seed: 20240611 },
    );
  });

  it('the table is deterministic and complete: exactly one row per state and input point', () => {
    // Checked inside equationsVersusTable (exactly one matching row), here with a wider shape.
    const wide: DesignShape = { maxStates: 4, maxBitInputs: 6, maxTransitions: 5 };
    fc.assert(
      fc.property(designArb(wide), (spec) => {
        const m = machineFromText(renderDesign(spec, wide));
        // Only the table is looked at here, so the quick heuristic minimizer is enough.
        const r = synthesize(m, { encoding: 'binary', exactLimit: 0 });
        if (!r.ok) throw new Error(r.error);
        const rowProblems = equationsVersusTable(r.result, []);
        if (rowProblems.length) throw new Error(rowProblems.join('\n'));
      }),
      { numRuns: 40, seed: 77 },
    );
  });

  it('shared units never serve two operations in one state, and share only kind and width', () => {
    fc.assert(
      fc.property(designArb(SMALL), (spec) => {
        const m = machineFromText(renderDesign(spec, SMALL));
        const s = synth(m, 'binary', true);
        const ops = new Map(s.datapath.operations.map((o) => [o.id, o]));
        for (const u of s.datapath.units) {
          const busy = new Set<number>();
          for (const id of u.operations) {
            const o = ops.get(id)!;
            expect(o.kind).toBe(u.kind);
            expect(o.width).toBe(u.width);
            for (const st of o.states) {
              expect(busy.has(st)).toBe(false);
              busy.add(st);
            }
          }
        }
        expect(s.datapath.unitCount.shared).toBeLessThanOrEqual(s.datapath.unitCount.unshared);
        expect(s.datapath.unitCount.unshared).toBe(s.datapath.operations.length);
      }),
      { numRuns: 40, seed: 5 },
    );
  });
});

describe('state encodings', () => {
  it('Gray code: consecutive codes differ in exactly one bit, also cyclically (reflected binary code, US patent 2,632,058, 1953)', () => {
    const popcount = (x: number) => x.toString(2).split('').filter((c) => c === '1').length;
    for (let width = 1; width <= 10; width++) {
      const n = 2 ** width;
      const seen = new Set<number>();
      for (let i = 0; i < n; i++) {
        seen.add(grayCode(i));
        expect(popcount(grayCode(i) ^ grayCode((i + 1) % n))).toBe(1);
      }
      expect(seen.size).toBe(n); // a permutation of the codes of that width
    }
  });

  it('Gray code: the 3-bit sequence is 000 001 011 010 110 111 101 100 (standard reflected binary table, quoted from memory)', () => {
    const m = machineFromText(`machine g\nin a : bit\n${Array.from({ length: 8 }, (_, i) => `state T${i}\n  on a go T${(i + 1) % 8}`).join('\n')}\n`);
    expect(synth(m, 'gray').encoding.codes).toEqual(['000', '001', '011', '010', '110', '111', '101', '100']);
  });

  it('binary: state i gets code i in declaration order, on ceil(log2 n) flip-flops (at least one)', () => {
    for (const n of [1, 2, 3, 5, 8, 9, 17]) {
      const m = machineFromText(`machine b\nin a : bit\n${Array.from({ length: n }, (_, i) => `state T${i}\n  on a go T${(i + 1) % n}`).join('\n')}\n`);
      const s = synth(m, 'binary');
      const width = Math.max(1, Math.ceil(Math.log2(n)));
      expect(s.encoding.width).toBe(width);
      expect(bitsForStates(n)).toBe(width);
      s.encoding.codes.forEach((c, i) => expect(parseInt(c, 2)).toBe(i));
    }
  });

  it('unused codes: the don\'t-care cubes cover exactly the codes no state has (checked point by point)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 7 }).chain((w) => fc.tuple(fc.constant(w), fc.uniqueArray(fc.nat(2 ** w - 1), { maxLength: 2 ** w }))), ([w, used]) => {
        const codes = used.map((c) => c.toString(2).padStart(w, '0'));
        const cubes = unusedCodeCubes(codes, w);
        for (let v = 0; v < 2 ** w; v++) {
          const p = v.toString(2).padStart(w, '0');
          expect(coverHolds(cubes, p)).toBe(!codes.includes(p));
        }
      }),
      { numRuns: 100, seed: 3 },
    );
  });

  describe('one-hot', () => {
    it('one flip-flop per state, exactly one bit set in each code, reset code = code of the initial state', () => {
      for (const { machine } of FIXTURES) {
        const s = synth(machine, 'onehot');
        expect(s.encoding.width).toBe(machine.states.length);
        s.encoding.codes.forEach((c, i) => {
          expect(c.split('').filter((x) => x === '1').length).toBe(1);
          expect(c.indexOf('1')).toBe(i);
        });
        expect(s.encoding.resetCode).toBe(s.encoding.codes[machine.resetState]);
        expect(s.form).toBe('one-hot form');
      }
    });

    it('above 32 states the full decode is skipped with a note, and the one-hot form still simulates like the IR', () => {
      const n = 33;
      const m = machineFromText(`machine ring\nin a : bit\nout y : bit = 0\n${Array.from({ length: n }, (_, i) => `state T${i}\n${i % 2 ? '  y = 1\n' : ''}  on a go T${(i + 1) % n}`).join('\n')}\n`);
      const s = synth(m, 'onehot');
      expect(s.fullDecode).toBeNull();
      expect(s.notes.join(' ')).toMatch(/full decode skipped: 33 states/);
      expect(simulateAgainstIr(m, s, s.equations, 300, 6)).toEqual([]);
      expect(compareEncodings(m).rows.find((r) => r.encoding === 'onehot full decode')!.error).toMatch(/skipped/);
    });

    it('one-hot form: each product term tests exactly one state flip-flop, set (the usual one-hot form)', () => {
      for (const { machine } of FIXTURES) {
        const s = synth(machine, 'onehot');
        const w = s.encoding.width;
        for (const e of s.equations) for (const c of e.cover) expect(c.slice(0, w).replace(/-/g, '')).toBe('1');
      }
    });

    it('both forms agree with the full decode of the table on all reachable care points (fixtures and random machines)', () => {
      for (const { machine } of FIXTURES) {
        const s = synth(machine, 'onehot');
        const reach = reachableStates(machine);
        expect(equationsVersusTable(s, s.equations, reach)).toEqual([]);
        expect(equationsVersusTable(s, s.fullDecode!, reach)).toEqual([]);
      }
      fc.assert(
        fc.property(designArb(SMALL), (spec) => {
          const m = machineFromText(renderDesign(spec, SMALL));
          const s = synth(m, 'onehot');
          const reach = reachableStates(m);
          const problems = [...equationsVersusTable(s, s.equations, reach), ...equationsVersusTable(s, s.fullDecode!, reach)];
          if (problems.length) throw new Error(problems.join('\n'));
        }),
        { numRuns: 40, seed: 9 },
      );
    });
  });

  describe('custom codes', () => {
    const withCodes = `machine c
in a : bit
in b : bit
out y : bit = 0
state A initial code 5
  on a go B
state B code 9
  y = 1
  on b go C
state C code 2
  on a and b go A
`;

    it('uses the design codes on as many flip-flops as the largest code needs (9 -> 4 bits)', () => {
      const m = machineFromText(withCodes);
      const s = synth(m, 'custom');
      expect(s.encoding.width).toBe(4);
      expect(s.encoding.codes).toEqual(['0101', '1001', '0010']);
      expect(equationsVersusTable(s, s.equations)).toEqual([]);
      expect(simulateAgainstIr(m, s, s.equations, 500, 4)).toEqual([]);
    });

    it('rejects a design without codes, naming the fix', () => {
      const m = machineFromText(withCodes.replace(/ code \d+/g, ''));
      const r = synthesize(m, { encoding: 'custom' });
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.error).toMatch(/gives no state codes.*code N/);
    });

    it('rejects a missing code, naming the state', () => {
      const m = machineFromText(withCodes);
      const broken: Machine = { ...m, states: m.states.map((s) => (s.name === 'B' ? { ...s, code: null } : s)) };
      const r = synthesize(broken, { encoding: 'custom' });
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.error).toMatch(/state 'B' has no code/);
    });

    it('rejects duplicate codes, naming both states and the code', () => {
      const m = machineFromText(withCodes);
      const broken: Machine = { ...m, states: m.states.map((s) => (s.name === 'C' ? { ...s, code: 5 } : s)) };
      const r = synthesize(broken, { encoding: 'custom' });
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.error).toMatch(/'A' and 'C' both have code 5/);
    });
  });
});

describe('datapath allocation', () => {
  const tank = FIXTURES.find((f) => f.file === 'tank_dosing.tsm');

  it.runIf(tank)('tank_dosing by hand analysis of the design text', () => {
    // Expected values read off fixtures/tank_dosing.tsm by hand:
    // target <- dose (one source); poured <- 0 | poured + 1 (two sources, one select bit);
    // runs <- runs + 1 (one source); shown shows poured or its default 0 (two sources);
    // conditions test dose != 0, dose <= MAX_DOSE and poured == target (three status signals);
    // operations: two adders (8 and 16 bits), two equality and one magnitude comparator; the
    // equality comparators are busy in Idle and Pump only, so sharing merges them (5 -> 4 units).
    const s = synth(tank!.machine, 'binary');
    const reg = (n: string) => s.datapath.registers.find((r) => r.register === n)!;
    expect(reg('target').sources.map((x) => x.text)).toEqual(['dose']);
    expect(reg('target').select).toEqual([]);
    expect(new Set(reg('poured').sources.map((x) => x.text))).toEqual(new Set(['0', 'poured + 1']));
    expect(reg('poured').select).toEqual(['sel_poured']);
    expect(reg('poured').loadEnable).toBe('ld_poured');
    expect(reg('runs').sources.map((x) => x.text)).toEqual(['runs + 1']);
    const shown = s.datapath.outputs.find((o) => o.output === 'shown')!;
    expect(new Set(shown.sources.map((x) => x.text))).toEqual(new Set(['poured', '0']));
    expect(shown.select).toEqual(['sel_shown']);
    expect(s.datapath.outputs.map((o) => o.output)).toEqual(['shown']);
    expect(new Set(s.datapath.statusSignals.map((x) => x.text))).toEqual(new Set(['dose != 0', 'dose <= 200', 'poured == target']));
    expect(s.controller.inputs.filter((i) => i.from === 'input').map((i) => i.name)).toEqual(['go_btn', 'pulse', 'abort']);
    const kinds = s.datapath.units.map((u) => `${u.kind}/${u.width}`).sort();
    expect(kinds).toEqual(['adder/16', 'adder/8', 'equality comparator/8', 'equality comparator/8', 'magnitude comparator/8']);
    expect(s.datapath.unitCount).toEqual({ unshared: 5, shared: 4 });
    expect(synth(tank!.machine, 'binary', true).datapath.units.length).toBe(4);
    // pump, valve and done are constant in every state: the controller drives them.
    expect(s.controller.outputs.filter((o) => o.role === 'output').map((o) => o.name)).toEqual(['pump', 'valve', 'done']);
  });

  it('a status signal and its complement share one comparator (x != 0 and x == 0)', () => {
    const m = machineFromText(`machine n
in x : u4
in a : bit
state A initial
  on x != 0 go B
state B
  on x == 0 and a go A
`);
    const s = synth(m, 'binary');
    expect(s.datapath.statusSignals.length).toBe(1);
    expect(simulateAgainstIr(m, s, s.equations, 400, 2)).toEqual([]);
  });

  it('a select is a don\'t-care in rows where its register does not load', () => {
    const tankS = tank ? synth(tank.machine, 'binary') : null;
    if (!tankS) return;
    const k = tankS.controller.outputs.findIndex((o) => o.name === 'sel_poured');
    const ld = tankS.controller.outputs.findIndex((o) => o.name === 'ld_poured');
    for (const r of tankS.controller.table) expect(r.outputs[k] === '-').toBe(r.outputs[ld] === '0');
  });

  it('generated names never clash with design names or with each other', () => {
    const m = machineFromText(`machine clash
in st_a : bit
in a : bit
out sel_v : bit = 0
out v : u4 = 0
reg ld_r : u4 reset 0
reg r : u4 reset 0
reg sel_r : u4 reset 0
reg q0 : bit reset 0
const q_S1 = 3
state S0 initial
  v = r
  r <- r + 1
  on a go S1 with ld_r <- 1
state S1
  v = ld_r
  sel_v = 1
  on r == q_S1 go S0 with r <- 0; sel_r <- r
`);
    for (const enc of ['binary', 'onehot'] as const) {
      const s = synth(m, enc, true);
      const design = new Set([m.name, ...m.inputs.map((x) => x.name), ...m.outputs.map((x) => x.name), ...m.registers.map((x) => x.name), ...m.constants.map((x) => x.name), ...m.states.map((x) => x.name)]);
      const generated = [
        ...s.datapath.statusSignals.map((x) => x.name),
        ...s.controller.outputs.filter((o) => o.role !== 'output').map((o) => o.name),
        ...s.datapath.units.map((u) => u.name),
        ...s.encoding.bits,
      ];
      for (const g of generated) expect(design.has(g), g).toBe(false);
      expect(new Set(generated).size).toBe(generated.length);
      for (const g of generated) expect(g).toMatch(/^[A-Za-z_][A-Za-z0-9_]*$/);
      expect(simulateAgainstIr(m, s, s.equations, 400, 8)).toEqual([]);
    }
  });
});

describe('bad input', () => {
  it('malformed machines give a message, never an exception', () => {
    const good = FIXTURES[0].machine;
    const cases: [unknown, RegExp][] = [
      [{}, /malformed/],
      [null, /malformed/],
      [{ ...good, states: [] }, /malformed at states/],
      [{ ...good, resetState: 99 }, /reset state index 99/],
      [{ ...good, states: good.states.map((s, i) => (i === 0 ? { ...s, transitions: [{ ...s.transitions[0] ?? { condition: null, transfers: [], outputs: [], loc: { line: 1, col: 1 } }, target: 50 }] } : s)) }, /state index 50/],
    ];
    for (const [m, msg] of cases) {
      const r = synthesize(m as Machine, { encoding: 'binary' });
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.error).toMatch(msg);
    }
    const r = synthesize(good, { encoding: 'octal' as EncodingKind });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error).toMatch(/invalid synthesis options: encoding/);
  });

  it('compareEncodings reports a failing encoding in its row instead of failing', () => {
    const c = compareEncodings(FIXTURES[0].machine);
    const custom = c.rows.find((r) => r.encoding === 'custom')!;
    if (FIXTURES[0].machine.states.some((s) => s.code === null)) {
      expect(custom.ok).toBe(false);
      expect(custom.error).toMatch(/code/);
    }
    for (const r of c.rows.filter((x) => x.ok && x.encoding !== 'onehot' && x.encoding !== 'onehot full decode')) expect(r.flipFlops).toBe(bitsForStates(FIXTURES[0].machine.states.length));
  });
});
