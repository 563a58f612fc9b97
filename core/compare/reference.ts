// The comparator's reference path: what the model expects in every field of a frame, computed with the
// bigint interpreter from the board's own values. Slow and plain; runs only on frames the kernel flags
// (and on every frame when a waveform is being written).
import { evalExpr, type Env } from '../ir/eval';
import type { Machine } from '../ir/schema';
import { interpreter, type CycleResult } from '../model/interpreter';
import type { FrameLayout } from '../protocol/frame';
import { readBig, type ProbeMap } from './probe-map';

/** What the prediction for a frame rests on. */
export type Basis = { kind: 'none' } | { kind: 'reset' } | { kind: 'frame'; values: bigint[] };

export interface Expectation {
  /** Expected bit pattern per field; null where the model makes no claim (inputs, or no basis). */
  expected: (bigint | null)[];
  /** The board's state index in this frame, -1 for a code no state has. */
  boardState: number;
  /** Previous frame's state index (basis `frame` with a legal state), else -1. */
  fromState: number;
  /** State the model expects in this frame, -1 when it expects none. */
  expectedState: number;
  /** Transition the model fires from the previous frame's values (-1: implicit stay). */
  expectedFired: number;
  /** The model's step from the previous frame, when there was one. */
  previousStep: CycleResult | null;
}

/** Unpack every field of a raw frame as bigint bit patterns. */
export function frameValues(layout: FrameLayout, raw: Uint8Array): bigint[] {
  return layout.fields.map((f, k) => readBig(raw, layout.offsets[k], f.width));
}

export function referenceModel(m: Machine, map: ProbeMap) {
  const model = interpreter(m);
  const inputIndex = new Map(m.inputs.map((x, i) => [x.name, i]));
  const regIndex = new Map(m.registers.map((x, i) => [x.name, i]));

  const stateOf = (values: bigint[]) => map.stateByCode.get(Number(values[map.state])) ?? -1;
  const inputsOf = (values: bigint[]) => map.inputs.map((f) => values[f]);
  const regsOf = (values: bigint[]) => map.registers.map((f) => values[f]);
  const env = (values: bigint[]): Env => ({ input: (n) => values[map.inputs[inputIndex.get(n)!]], reg: (n) => values[map.registers[regIndex.get(n)!]] });
  const codeOf = (state: number) => BigInt([...map.stateByCode].find(([, s]) => s === state)![0]);

  /** The model's cycle from a frame's state, registers and inputs; null when its state code is illegal. */
  function stepFrom(values: bigint[]): CycleResult | null {
    const state = stateOf(values);
    if (state < 0) return null;
    return model.step({ state, regs: regsOf(values) }, inputsOf(values));
  }

  function expect(basis: Basis, values: bigint[]): Expectation {
    const expected: (bigint | null)[] = values.map(() => null);
    let fromState = -1;
    let expectedState = -1;
    let expectedFired = -1;
    let previousStep: CycleResult | null = null;
    if (basis.kind === 'reset') {
      expectedState = m.resetState;
      m.registers.forEach((r, k) => (expected[map.registers[k]] = BigInt(r.resetBits)));
    } else if (basis.kind === 'frame') {
      fromState = stateOf(basis.values);
      previousStep = stepFrom(basis.values);
      if (previousStep) {
        expectedState = previousStep.next.state;
        expectedFired = previousStep.fired;
        previousStep.next.regs.forEach((v, k) => (expected[map.registers[k]] = v));
      }
    }
    if (expectedState >= 0) expected[map.state] = codeOf(expectedState);
    const e = env(values);
    for (const s of map.statuses) expected[s.field] = evalExpr(s.signal.expr, e);
    const boardState = stateOf(values);
    const here = stepFrom(values);
    if (here) for (const o of map.outputs) expected[o.field] = here.outputs[o.output];
    return { expected, boardState, fromState, expectedState, expectedFired, previousStep };
  }

  return { expect, stateOf, stepFrom, env, codeOf };
}

export type ReferenceModel = ReturnType<typeof referenceModel>;
