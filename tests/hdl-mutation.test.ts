// Mutation tests: a single fault injected into generated HDL must be caught by the generated
// testbench (run in Icarus Verilog) at the cycle and signal where the fault first shows. The expected
// cycle is worked out independently here, from the IR evaluated on the golden model's trace.
import { describe, expect, it } from 'vitest';
import { evalExpr } from '../core/ir/eval';
import type { Machine } from '../core/ir/schema';
import type { TraceRow } from '../core/model/trace';
import type { Synthesis } from '../core/synth/schema';
import { exprKey } from '../core/synth/expr';
import { buildFixture } from './support/hdl';
import { runIcarus } from './support/tools';

function envAt(m: Machine, row: TraceRow) {
  return {
    input: (n: string) => row.inputs[m.inputs.findIndex((i) => i.name === n)],
    reg: (n: string) => row.regs[m.registers.findIndex((r) => r.name === n)],
  };
}

function firstMismatch(out: string): { cycle: number; signal: string } | null {
  const m = /MISMATCH cycle (\d+) signal (\S+)/.exec(out);
  return m ? { cycle: Number(m[1]), signal: m[2] } : null;
}

/** Cycle at which register `reg`'s load picks source `i` while source `j` would give another value. */
function firstSelectDifference(m: Machine, syn: Synthesis, trace: TraceRow[], reg: string): number {
  const path = syn.datapath.registers.find((r) => r.register === reg)!;
  const keys = path.sources.map((s) => exprKey(s.expr));
  for (const row of trace) {
    const st = m.states[row.state];
    const tr = row.fired >= 0 ? st.transitions[row.fired] : null;
    const transfer = [...st.transfers, ...(tr?.transfers ?? [])].find((t) => t.register === reg);
    if (!transfer) continue;
    const sel = keys.indexOf(exprKey(transfer.value));
    const other = 1 - sel;
    const env = envAt(m, row);
    if (evalExpr(path.sources[sel].expr, env) !== evalExpr(path.sources[other].expr, env)) return row.cycle;
  }
  return -1;
}

describe('mutation: the generated testbench catches a single injected fault (Icarus Verilog)', () => {
  it('one register multiplexer select flipped: caught at the first load where the other source differs', () => {
    const b = buildFixture('tank_dosing', 'binary', 'behavioral', 1000);
    const path = b.syn.datapath.registers.find((r) => r.register === 'poured')!;
    expect(path.select).toHaveLength(1);
    const dp = b.files['tank_dosing_dp.v'];
    const mutated = dp.replace(`case (${path.select[0]})`, `case (~${path.select[0]})`);
    expect(mutated).not.toBe(dp);
    const c = firstSelectDifference(b.machine, b.syn, b.trace, 'poured');
    expect(c).toBeGreaterThanOrEqual(0);
    const out = runIcarus({ ...b.files, 'tank_dosing_dp.v': mutated }, 'tb_tank_dosing');
    // The register shows the wrong value right after the clock edge that ends cycle c.
    expect(firstMismatch(out)).toEqual({ cycle: c + 1, signal: 'poured' });
    expect(out).toMatch(/^FAIL: tank_dosing diverges from the model at cycle/m);
  });

  it('one next-state product term removed: caught at the first cycle where only that term is true', () => {
    const b = buildFixture('bottle_capper', 'binary', 'equations', 1000);
    const { machine: m, syn, trace } = b;
    const W = syn.encoding.width;
    const ctrlValue = (row: TraceRow, k: number) => {
      const input = syn.controller.inputs[k];
      if (input.from === 'input') return row.inputs[m.inputs.findIndex((i) => i.name === input.name)] === 1n;
      const status = syn.datapath.statusSignals.find((s) => s.name === input.name)!;
      return evalExpr(status.expr, envAt(m, row)) === 1n;
    };
    const point = (row: TraceRow) => syn.encoding.codes[row.state] + syn.controller.inputs.map((_, k) => (ctrlValue(row, k) ? '1' : '0')).join('');
    const holds = (cube: string, p: string) => [...cube].every((c, i) => c === '-' || c === p[i]);
    // Pick the first (equation, term) that is the only true term of its equation somewhere in the run.
    let choice: { bit: number; term: number; cycle: number } | null = null;
    for (const eq of syn.equations.filter((e) => e.kind === 'next-state')) {
      const bit = syn.encoding.bits.indexOf(eq.target.replace(/'$/, ''));
      for (let t = 0; t < eq.cover.length && !choice; t++) {
        for (const row of trace.slice(0, -1)) {
          const p = point(row);
          if (holds(eq.cover[t], p) && eq.cover.every((c, u) => u === t || !holds(c, p))) {
            choice = { bit, term: t, cycle: row.cycle };
            break;
          }
        }
      }
      if (choice) break;
    }
    expect(choice).not.toBeNull();
    const ctrl = b.files['bottle_capper_ctrl.v'];
    const lineRe = new RegExp(`assign state_eq\\[${W - 1 - choice!.bit}\\] = (.*);`);
    const terms = lineRe.exec(ctrl)![1].split(' | ');
    const kept = terms.filter((_, i) => i !== choice!.term);
    const mutated = ctrl.replace(lineRe, `assign state_eq[${W - 1 - choice!.bit}] = ${kept.length ? kept.join(' | ') : "1'b0"};`);
    const out = runIcarus({ ...b.files, 'bottle_capper_ctrl.v': mutated }, 'tb_bottle_capper');
    expect(firstMismatch(out)).toEqual({ cycle: choice!.cycle + 1, signal: 'state' });
  });
});
