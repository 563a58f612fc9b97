// The reference model: walks the IR every cycle with bigint bit patterns. Slow and plain on purpose;
// the compiled model and the generated HDL are both checked against it.
import type { Machine } from '../ir/schema';
import { evalExpr, type Env } from '../ir/eval';

/** The machine's memory between clock edges: current state index and register bit patterns. */
export interface ModelState {
  state: number;
  regs: bigint[];
}

export interface CycleResult {
  /** Output bit patterns during this cycle, in machine.outputs order. */
  outputs: bigint[];
  /** Index (in the state's transition list) of the transition that fired, or -1 for the implicit stay. */
  fired: number;
  next: ModelState;
}

export function resetState(m: Machine): ModelState {
  return { state: m.resetState, regs: m.registers.map((r) => BigInt(r.resetBits)) };
}

/** Index lookups resolved once per machine rather than once per expression node. */
export function interpreter(m: Machine) {
  const inputIndex = new Map(m.inputs.map((x, i) => [x.name, i]));
  const regIndex = new Map(m.registers.map((x, i) => [x.name, i]));
  const outputIndex = new Map(m.outputs.map((x, i) => [x.name, i]));
  const defaults = m.outputs.map((o) => BigInt(o.defaultBits));

  function step(s: ModelState, inputs: readonly bigint[]): CycleResult {
    const env: Env = { input: (n) => inputs[inputIndex.get(n)!], reg: (n) => s.regs[regIndex.get(n)!] };
    const st = m.states[s.state];
    const outputs = defaults.slice();
    const regs = s.regs.slice();
    for (const o of st.outputs) outputs[outputIndex.get(o.output)!] = evalExpr(o.value, env);
    for (const t of st.transfers) regs[regIndex.get(t.register)!] = evalExpr(t.value, env);
    let fired = -1;
    let nextState = s.state;
    for (let k = 0; k < st.transitions.length; k++) {
      const tr = st.transitions[k];
      if (tr.condition === null || evalExpr(tr.condition, env) !== 0n) {
        fired = k;
        nextState = tr.target;
        for (const o of tr.outputs) outputs[outputIndex.get(o.output)!] = evalExpr(o.value, env);
        for (const t of tr.transfers) regs[regIndex.get(t.register)!] = evalExpr(t.value, env);
        break;
      }
    }
    return { outputs, fired, next: { state: nextState, regs } };
  }

  return { reset: () => resetState(m), step };
}
