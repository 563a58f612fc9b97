// The lockstep comparator against boards built independently in the test (reference interpreter plus
// injected faults, frames from the protocol encoder): every injected fault is reported at its cycle and
// signal, resynchronisation lists each independent divergence once, and losses are gaps, not divergences.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { randomStimulus } from '../core/model/stimulus';
import { simulate } from '../core/model/trace';
import { interpreter } from '../core/model/interpreter';
import { BoardEmulator } from '../core/probe/emulator';
import { compare, design, divergences, probeStream, runBoard, summaryOf, type Design } from './compare-frames';
import { fixtureNames } from './support/load';

const ENCODINGS = ['binary', 'gray', 'onehot'] as const;

/** A cycle in which the model leaves a state for a given next state, found from the plain model trace. */
function cycleWhere(d: Design, rows: bigint[][], pred: (state: number, next: number, k: number) => boolean): number {
  const trace = simulate(d.m, rows);
  for (let k = 0; k + 1 < trace.length; k++) if (pred(trace[k].state, trace[k + 1].state, k)) return k;
  throw new Error('no such cycle in the stimulus');
}

describe('a faithful board', () => {
  for (const name of fixtureNames()) {
    for (const encoding of ENCODINGS) {
      it(`${name} (${encoding}): 3000 random cycles, no divergence, every frame after the first compared`, () => {
        const d = design(name, encoding);
        const rows = randomStimulus(d.m, 3000, 11);
        const vs = compare(d, probeStream(d.layout, runBoard(d, rows)), [4096]);
        expect(divergences(vs)).toEqual([]);
        const s = summaryOf(vs);
        expect(s.outcome).toBe('agree');
        expect(s.cycleFrames).toBe(3000);
        // After the reset identification frame, every frame has a basis: the reset values or the previous frame.
        expect(s.comparedFrames).toBe(3000);
        expect(s.lastCycle).toBe(2999);
      });
    }
  }
});

describe('injected faults', () => {
  it('a wrong transition is reported once, at the next cycle, on the state, with both transitions named', () => {
    const d = design('tank_dosing');
    const rows = randomStimulus(d.m, 400, 3);
    // Pick a cycle where the model goes Pump -> Pump; make the board go to Finish instead.
    const pump = d.m.states.findIndex((s) => s.name === 'Pump');
    const finish = d.m.states.findIndex((s) => s.name === 'Finish');
    const at = cycleWhere(d, rows, (s, n) => s === pump && n === pump);
    const vs = compare(d, probeStream(d.layout, runBoard(d, rows, [{ kind: 'jump', at, to: finish }])));
    const ds = divergences(vs);
    expect(ds.map((v) => [v.cycle, v.signal])).toEqual([[at + 1, 'state']]);
    expect(ds[0].transition).toEqual({ from: 'Pump', expected: 'Pump', board: 'Finish' });
    // Binary codes (synthesis order): Pump 10, Finish 11: bit q0 differs.
    expect(ds[0].explanation).toMatch(/next-state bit q0 expected 0, board 1; q0' = /);
    expect(ds[0].explanation).toMatch(/did not follow its equation/);
  });

  it('two independent wrong transitions give exactly two divergences (resynchronisation on the board)', () => {
    const d = design('bottle_capper');
    const rows = randomStimulus(d.m, 600, 5);
    const trace = simulate(d.m, rows);
    const n = d.m.states.length;
    const a = 100;
    const b = 400;
    const faults = [
      { kind: 'jump' as const, at: a, to: (trace[a + 1].state + 1) % n },
      { kind: 'jump' as const, at: b, to: 0 },
    ];
    const board = runBoard(d, rows, faults);
    // Each jump is a divergence only if it changes the next state the board itself computed.
    const expected = faults.filter((f) => board[f.at].computedNext !== f.to).map((f) => f.at + 1);
    expect(expected.length).toBeGreaterThan(0);
    const ds = divergences(compare(d, probeStream(d.layout, board)));
    expect(ds.map((v) => v.cycle)).toEqual(expected);
    expect(ds.every((v) => v.signal === 'state')).toBe(true);
  });

  it('a stuck register bit is reported from the first cycle the model expects the other value, on that register', () => {
    const d = design('tank_dosing');
    const rows = randomStimulus(d.m, 2000, 8);
    const from = 40;
    const fault = { kind: 'stuck' as const, reg: 'runs', bit: 1, value: 1 as const, from };
    const board = runBoard(d, rows, [fault]);
    // Before the first divergence the board equals the fault-free model, so its trace tells where that is.
    const trace = simulate(d.m, rows);
    const runs = d.m.registers.findIndex((r) => r.name === 'runs');
    const first = trace.findIndex((t, k) => k >= from && ((t.regs[runs] >> 1n) & 1n) === 0n);
    const vs = compare(d, probeStream(d.layout, board));
    const ds = divergences(vs);
    expect(ds[0].cycle).toBe(first);
    expect(ds[0].signal).toBe('reg.runs');
    expect(ds[0].differingBits).toEqual([1]);
    // Every later divergence is on the same bit with the board showing 1 (resynchronised each cycle),
    // and each is a cycle in which the interpreter, started from the board's previous frame, expects a 0 there.
    const model = interpreter(d.m);
    for (const v of ds) {
      expect(v.signal).toBe('reg.runs');
      expect(v.actualBits.at(-2)).toBe('1');
      const prev = board[v.cycle - 1];
      const step = model.step({ state: prev.state, regs: d.m.registers.map((_, i) => prev.values[d.layout.fields.findIndex((f) => f.kind === 'register' && f.source === d.m.registers[i].name)]) }, rows[v.cycle - 1]);
      expect((step.next.regs[runs] >> 1n) & 1n).toBe(0n);
    }
    if (ds.length >= 3) {
      const hint = vs.find((v) => v.kind === 'hint' && v.cause === 'stuck-bit');
      expect(hint && hint.kind === 'hint' && hint.text).toMatch(/Bit 1 of reg\.runs may be stuck at 1/);
    }
  });

  it('a register loaded when its load enable should be 0 is explained by the load enable', () => {
    const d = design('tank_dosing');
    const rows = randomStimulus(d.m, 300, 2);
    const board = runBoard(d, rows);
    // In a cycle spent in Idle, 'runs' must hold; make the next frame show runs + 1.
    const idle = d.m.states.findIndex((s) => s.name === 'Idle');
    const k = board.findIndex((c, i) => i > 5 && c.state === idle);
    const field = d.layout.fields.findIndex((f) => f.source === 'runs');
    board[k + 1].values[field] += 1n;
    const ds = divergences(compare(d, probeStream(d.layout, board)));
    expect(ds[0].cycle).toBe(k + 1);
    expect(ds[0].signal).toBe('reg.runs');
    expect(ds[0].explanation).toMatch(/^runs changed to .* though its load enable ld_runs should be 0 in state Idle/);
  });

  it('a status bit that disagrees with its comparator is explained with the operand values', () => {
    const d = design('tank_dosing');
    const rows = randomStimulus(d.m, 100, 4);
    const board = runBoard(d, rows);
    const f = d.layout.fields.findIndex((x) => x.name === 'status.st_dose_ne_0');
    const dose = d.layout.fields.findIndex((x) => x.name === 'in.dose');
    board[20].values[f] ^= 1n;
    const ds = divergences(compare(d, probeStream(d.layout, board)));
    const st = ds.find((v) => v.signal === 'status.st_dose_ne_0');
    expect(st?.cycle).toBe(20);
    // dose != 0 computed here from the frame's own dose value.
    const want = board[20].values[dose] !== 0n ? '1' : '0';
    expect(st?.expected).toBe(want);
    expect(st?.explanation).toContain(`dose != 0 with dose = ${board[20].values[dose]} gives ${want}`);
  });
});

describe('losses on the link', () => {
  it('dropped frames are one gap at the first missing cycle; comparison resumes with no divergence', () => {
    const d = design('event_stamper');
    const rows = randomStimulus(d.m, 500, 9);
    const vs = compare(d, probeStream(d.layout, runBoard(d, rows), { drop: new Set([200, 201, 202]) }));
    expect(divergences(vs)).toEqual([]);
    const gaps = vs.filter((v) => v.kind === 'gap');
    expect(gaps).toMatchObject([{ kind: 'gap', cycle: 200, missing: 3 }]);
    const s = summaryOf(vs);
    expect(s.cycleFrames).toBe(497);
    // The frame after the gap has no predecessor to be predicted from: 497 frames, 496 compared.
    expect(s.comparedFrames).toBe(496);
    expect(s.lastCycle).toBe(499);
  });

  it('a corrupted byte costs one frame: a decode error and a gap, never a divergence', () => {
    const d = design('trim_servo');
    const rows = randomStimulus(d.m, 300, 1);
    const mangle = (cycle: number, wire: Uint8Array) => {
      if (cycle !== 77) return wire;
      const w = wire.slice();
      // Flip one bit of a payload byte, avoiding a result of 0x00 (that would split the frame instead).
      w[3] = w[3] ^ 0x01 || w[3] ^ 0x02;
      return w;
    };
    const vs = compare(d, probeStream(d.layout, runBoard(d, rows), { mangle }));
    expect(divergences(vs)).toEqual([]);
    expect(vs.filter((v) => v.kind === 'decode-error').length).toBe(1);
    expect(vs.filter((v) => v.kind === 'gap')).toMatchObject([{ cycle: 77, missing: 1 }]);
  });

  it('verdicts do not depend on how the stream is cut into chunks', () => {
    const d = design('link_scrambler');
    const rows = randomStimulus(d.m, 300, 6);
    const board = runBoard(d, rows, [{ kind: 'jump', at: 150, to: 0 }]);
    const stream = probeStream(d.layout, board, { drop: new Set([40]) });
    const whole = compare(d, stream);
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 1, max: 40 }), { minLength: 1, maxLength: 20 }), (chunks) => {
        expect(compare(d, stream, chunks)).toEqual(whole);
      }),
      { numRuns: 40 },
    );
  });

  it('line faults of the board emulator (lost bytes, a receiver at the wrong baud) never show as divergences', () => {
    const d = design('tank_dosing');
    for (const faults of [[{ kind: 'drop' as const, every: 97 }], [{ kind: 'baud' as const, ratio: 1.07, seed: 4 }]]) {
      const emu = new BoardEmulator({ machine: d.m, synthesis: d.syn, layout: d.layout, random: { seed: 3 }, faults });
      const stream = emu.produce(60_000, 4000);
      const vs = compare(d, stream, [509]);
      // The board itself is faithful: whatever the line did, only losses may be reported.
      expect(divergences(vs)).toEqual([]);
      const s = summaryOf(vs);
      expect(s.crcErrors + s.framingErrors).toBeGreaterThan(0);
      if (faults[0].kind === 'drop') {
        expect(s.droppedFrames).toBeGreaterThan(0);
        expect(s.cycleFrames).toBeGreaterThan(1000);
      } else {
        expect(s.outcome).toBe('no-frames');
        expect(vs.some((v) => v.kind === 'hint' && v.cause === 'link' && /another baud/.test(v.text))).toBe(true);
      }
    }
  });

  it('a stream from a board running another design is flagged by its fingerprint', () => {
    const d = design('tank_dosing');
    const rows = randomStimulus(d.m, 50, 1);
    const vs = compare(d, probeStream(d.layout, runBoard(d, rows), { fingerprint: (d.layout.fingerprint ^ 0x1234) >>> 0 }));
    const id = vs.find((v) => v.kind === 'identity');
    expect(id && id.kind === 'identity' && id.mismatch).toMatch(/fingerprint .* is not the expected/);
    expect(vs.some((v) => v.kind === 'hint' && v.cause === 'stale-bitstream')).toBe(true);
  });
});
