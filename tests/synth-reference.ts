// Independent references for the synthesis tests: cube/cover evaluation written from the definition
// of a sum of products, and the cycle semantics of the IR evaluated directly with evalExpr.
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { checkDesign } from '../core/check/checker';
import { evalExpr, type Env } from '../core/ir/eval';
import type { Machine } from '../core/ir/schema';
import type { Equation, Synthesis } from '../core/synth/schema';
import { SeededRandom } from '../core/util/prng';
import fc from 'fast-check';

export const FIXTURE_DIR = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../fixtures');

/** Every design fixture, checked (more fixtures may appear; the glob picks them up). */
export function fixtureMachines(): { file: string; machine: Machine }[] {
  return readdirSync(FIXTURE_DIR)
    .filter((f) => f.endsWith('.tsm'))
    .sort()
    .map((f) => {
      const r = checkDesign(readFileSync(path.join(FIXTURE_DIR, f), 'utf8'), f);
      if (!r.machine) throw new Error(`fixture ${f} does not check: ${r.diagnostics.map((d) => d.message).join('; ')}`);
      return { file: f, machine: r.machine };
    });
}

export function machineFromText(text: string, file = 'test.tsm'): Machine {
  const r = checkDesign(text, file);
  if (!r.machine) throw new Error(`design does not check: ${r.diagnostics.map((d) => `${d.line}:${d.col} ${d.message}`).join('; ')}\n${text}`);
  return r.machine;
}

/** A product term is true when every literal agrees with the assignment ('-' agrees with anything). */
export function cubeHolds(cube: string, point: string): boolean {
  for (let i = 0; i < cube.length; i++) if (cube[i] !== '-' && cube[i] !== point[i]) return false;
  return true;
}

/** A sum of products is true when some product term is. */
export function coverHolds(cover: readonly string[], point: string): boolean {
  return cover.some((c) => cubeHolds(c, point));
}

/** Input-part assignments of one state: all of them when few enough, else a seeded sample. */
export function inputPoints(nInputs: number, budget: number, rng: SeededRandom): string[] {
  if (2 ** nInputs <= budget) return Array.from({ length: 2 ** nInputs }, (_, v) => (nInputs === 0 ? '' : v.toString(2).padStart(nInputs, '0')));
  return Array.from({ length: budget }, () => Array.from({ length: nInputs }, () => (rng.below(2) ? '1' : '0')).join(''));
}

/**
 * Compares equations with the transition table on the care points of the given states: for each
 * state code and input assignment, exactly one row must match, and every equation must give that
 * row's next-state bit or output value (rows marked '-' are skipped).
 * Exhaustive when states x 2^inputs <= 2^20 points, otherwise 4096 sampled points per state.
 */
export function equationsVersusTable(s: Synthesis, eqs: readonly Equation[], states: readonly number[] = s.states.map((_, i) => i)): string[] {
  const problems: string[] = [];
  const nIn = s.controller.inputs.length;
  const rng = new SeededRandom(7);
  const budget = states.length * 2 ** nIn <= 2 ** 20 ? 2 ** nIn : 4096;
  const outIndex = new Map(s.controller.outputs.map((o, k) => [o.name, k]));
  for (const st of states) {
    const code = s.encoding.codes[st];
    const rows = s.controller.table.filter((r) => r.state === st);
    for (const inp of inputPoints(nIn, budget, rng)) {
      const hit = rows.filter((r) => cubeHolds(r.cube, inp));
      if (hit.length !== 1) {
        problems.push(`state ${s.states[st]}, inputs ${inp}: ${hit.length} table rows match`);
        continue;
      }
      const row = hit[0];
      const point = code + inp;
      for (const e of eqs) {
        let want: string;
        if (e.kind === 'next-state') want = s.encoding.codes[row.next][s.encoding.bits.indexOf(e.target.slice(0, -1))];
        else want = row.outputs[outIndex.get(e.target)!];
        if (want !== '-' && (coverHolds(e.cover, point) ? '1' : '0') !== want) problems.push(`${e.target} at state ${s.states[st]}, inputs ${inp}: equation gives ${want === '1' ? 0 : 1}, table ${want}`);
      }
      if (problems.length > 10) return problems;
    }
  }
  return problems;
}

/** One clock cycle of the machine by the IR semantics, evaluated directly (the reference). */
export function irStep(m: Machine, state: number, regs: ReadonlyMap<string, bigint>, inputs: ReadonlyMap<string, bigint>) {
  const env: Env = { input: (n) => inputs.get(n)!, reg: (n) => regs.get(n)! };
  const st = m.states[state];
  const outputs = new Map(m.outputs.map((o) => [o.name, BigInt(o.defaultBits)]));
  const next = new Map(regs);
  for (const o of st.outputs) outputs.set(o.output, evalExpr(o.value, env));
  for (const t of st.transfers) next.set(t.register, evalExpr(t.value, env));
  let nextState = state;
  for (const tr of st.transitions) {
    if (tr.condition === null || evalExpr(tr.condition, env) !== 0n) {
      nextState = tr.target;
      for (const o of tr.outputs) outputs.set(o.output, evalExpr(o.value, env));
      for (const t of tr.transfers) next.set(t.register, evalExpr(t.value, env));
      break;
    }
  }
  return { nextState, regs: next, outputs };
}

/** Random input values: 1-bit inputs with a per-input bias, multi-bit inputs often small so equality tests hit. */
export function randomInputs(m: Machine, rng: SeededRandom, bias: ReadonlyMap<string, number>): Map<string, bigint> {
  const v = new Map<string, bigint>();
  for (const i of m.inputs) {
    if (i.type.width === 1) v.set(i.name, rng.float() < (bias.get(i.name) ?? 0.5) ? 1n : 0n);
    else v.set(i.name, rng.below(2) ? rng.bits(i.type.width) : BigInt(rng.below(4)));
  }
  return v;
}

/**
 * Runs the synthesized controller (equations over state bits and controller inputs) with its
 * datapath (load enables, multiplexers, sources) side by side with the IR reference, and reports
 * the first cycles where state, registers or outputs differ.
 */
export function simulateAgainstIr(m: Machine, s: Synthesis, eqs: readonly Equation[], cycles: number, seed: number): string[] {
  const rng = new SeededRandom(seed);
  const bias = new Map(m.inputs.map((i) => [i.name, 0.1 + 0.8 * rng.float()]));
  const eqByTarget = new Map(eqs.map((e) => [e.target, e]));
  const problems: string[] = [];
  let state = m.resetState;
  let code = s.encoding.resetCode;
  let regs = new Map(m.registers.map((r) => [r.name, BigInt(r.resetBits)]));
  if (code !== s.encoding.codes[m.resetState]) problems.push(`reset code ${code} is not the code of the initial state`);
  for (let cycle = 0; cycle < cycles && problems.length < 5; cycle++) {
    const inputs = randomInputs(m, rng, bias);
    const env: Env = { input: (n) => inputs.get(n)!, reg: (n) => regs.get(n)! };
    const ref = irStep(m, state, regs, inputs);

    const ctrlIn = s.controller.inputs.map((ci) => {
      if (ci.from === 'input') return inputs.get(ci.name) ? '1' : '0';
      const st = s.datapath.statusSignals.find((x) => x.name === ci.name)!;
      return evalExpr(st.expr, env) !== 0n ? '1' : '0';
    });
    const point = code + ctrlIn.join('');
    const value = (target: string): boolean => coverHolds(eqByTarget.get(target)!.cover, point);
    const nextCode = s.encoding.bits.map((b) => (value(`${b}'`) ? '1' : '0')).join('');
    const where = `cycle ${cycle} in ${m.states[state].name}`;
    if (nextCode !== s.encoding.codes[ref.nextState]) problems.push(`${where}: next code ${nextCode}, reference goes to ${m.states[ref.nextState].name} (${s.encoding.codes[ref.nextState]})`);

    const selectIndex = (names: readonly string[]): number => names.reduce((a, n, b) => a | ((value(n) ? 1 : 0) << b), 0);
    const nextRegs = new Map(regs);
    for (const rp of s.datapath.registers) {
      if (rp.loadEnable === null || !value(rp.loadEnable)) continue;
      const src = rp.sources[selectIndex(rp.select)];
      if (!src) {
        problems.push(`${where}: select of ${rp.register} points past its ${rp.sources.length} sources`);
        continue;
      }
      nextRegs.set(rp.register, evalExpr(src.expr, env));
    }
    for (const r of m.registers) if (nextRegs.get(r.name) !== ref.regs.get(r.name)) problems.push(`${where}: register ${r.name} becomes ${nextRegs.get(r.name)}, reference ${ref.regs.get(r.name)}`);

    for (const o of m.outputs) {
      const dp = s.datapath.outputs.find((x) => x.output === o.name);
      let got: bigint;
      if (dp) {
        const src = dp.sources[selectIndex(dp.select)];
        got = src ? evalExpr(src.expr, env) : -1n;
      } else got = value(o.name) ? 1n : 0n;
      if (got !== ref.outputs.get(o.name)) problems.push(`${where}: output ${o.name} = ${got}, reference ${ref.outputs.get(o.name)}`);
    }
    state = ref.nextState;
    code = s.encoding.codes[state];
    regs = ref.regs;
  }
  return problems;
}

/** States reachable from reset along transitions (any condition), by breadth-first search. */
export function reachableStates(m: Machine): number[] {
  const seen = new Set([m.resetState]);
  const queue = [m.resetState];
  while (queue.length) {
    const s = queue.shift()!;
    for (const t of m.states[s].transitions) if (!seen.has(t.target)) (seen.add(t.target), queue.push(t.target));
  }
  return [...seen].sort((a, b) => a - b);
}

// ---------------------------------------------------------------------------------------------
// Random designs for property tests and the bench, generated as design text so the checker
// decides what a valid machine is.

/** Status-producing atoms (comparisons, register bits, tests of multi-bit inputs). */
export const STATUS_ATOMS = ['f', 'r == 5', 'd > r', 'd[1]', 'r < 3', '(d and a0)'];
const R_VALUES = ['r + 1', 'd', '0', 'r - d', 'r ^ d', 'r'];
const F_VALUES = ['not f', 'a0', 'f', '1', 'd[0]'];
const OUT_VALUES: Record<string, string[]> = { o0: ['1', '0'], o1: ['1', 'f'], v: ['r', 'd', 'r + d', '3'], w: ['1'] };

export type CondSpec = { atom: number } | { not: CondSpec } | { op: 'and' | 'or' | '^'; left: CondSpec; right: CondSpec };
interface ActionSpec {
  r: number | null;
  f: number | null;
  o0: number | null;
  o1: number | null;
  v: number | null;
  w: number | null;
}
interface TransitionSpec extends ActionSpec {
  cond: CondSpec | null;
  target: number;
}
interface StateSpec extends ActionSpec {
  transitions: TransitionSpec[];
  code: number;
}
export interface DesignSpec {
  nStates: number;
  nBits: number;
  reset: number;
  withCodes: boolean;
  states: StateSpec[];
}

export interface DesignShape {
  maxStates: number;
  minStates?: number;
  maxBitInputs: number;
  minBitInputs?: number;
  maxTransitions: number;
  /** Atom indices beyond the bit inputs that may appear (indices into STATUS_ATOMS). */
  statusAtoms?: number;
  /** Make the first transition of state i test atom i mod (atom count), so every atom is used. */
  everyAtom?: boolean;
}

function condArb(atoms: number): fc.Arbitrary<CondSpec> {
  const atom = fc.nat(atoms - 1).map((a) => ({ atom: a }) as CondSpec);
  const level = (sub: fc.Arbitrary<CondSpec>): fc.Arbitrary<CondSpec> =>
    fc.oneof(
      { weight: 3, arbitrary: atom },
      { weight: 1, arbitrary: sub.map((c) => ({ not: c }) as CondSpec) },
      { weight: 2, arbitrary: fc.record({ op: fc.constantFrom('and' as const, 'or' as const, '^' as const), left: sub, right: sub }) },
    );
  return level(level(atom));
}

function actionArb(): fc.Arbitrary<ActionSpec> {
  const pick = (n: number) => fc.option(fc.nat(n - 1), { freq: 2 });
  return fc.record({ r: pick(R_VALUES.length), f: pick(F_VALUES.length), o0: pick(2), o1: pick(2), v: pick(4), w: pick(1) });
}

export function designArb(shape: DesignShape): fc.Arbitrary<DesignSpec> {
  const atoms = shape.maxBitInputs + (shape.statusAtoms ?? STATUS_ATOMS.length);
  const transition = fc.record({ cond: fc.option(condArb(atoms), { freq: 6 }), target: fc.nat(shape.maxStates - 1) }).chain((t) => actionArb().map((a) => ({ ...t, ...a })));
  const state = fc.record({ transitions: fc.array(transition, { minLength: shape.everyAtom ? 1 : 0, maxLength: shape.maxTransitions }) }).chain((s) => actionArb().map((a) => ({ ...s, ...a, code: 0 })));
  return fc
    .record({
      nStates: fc.integer({ min: shape.minStates ?? 1, max: shape.maxStates }),
      nBits: fc.integer({ min: shape.minBitInputs ?? 1, max: shape.maxBitInputs }),
      reset: fc.nat(shape.maxStates - 1),
      withCodes: fc.boolean(),
      codes: fc.uniqueArray(fc.nat(4 * shape.maxStates), { minLength: shape.maxStates, maxLength: shape.maxStates }),
      states: fc.array(state, { minLength: shape.maxStates, maxLength: shape.maxStates }),
    })
    .map(({ codes, ...d }) => ({ ...d, reset: d.reset % d.nStates, states: d.states.slice(0, d.nStates).map((s, i) => ({ ...s, code: codes[i] })) }));
}

/** Design text of a spec. Actions a state already performs are dropped from its transitions. */
export function renderDesign(d: DesignSpec, shape: DesignShape): string {
  const statusCount = shape.statusAtoms ?? STATUS_ATOMS.length;
  const atomText = (a: number): string => {
    const total = d.nBits + statusCount;
    const k = a % total;
    return k < d.nBits ? `a${k}` : STATUS_ATOMS[k - d.nBits];
  };
  const condText = (c: CondSpec): string => ('atom' in c ? atomText(c.atom) : 'not' in c ? `not (${condText(c.not)})` : `(${condText(c.left)}) ${c.op} (${condText(c.right)})`);
  const actions = (a: ActionSpec, skip: ActionSpec | null): string[] => {
    const out: string[] = [];
    if (a.r !== null && (skip === null || skip.r === null)) out.push(`r <- ${R_VALUES[a.r]}`);
    if (a.f !== null && (skip === null || skip.f === null)) out.push(`f <- ${F_VALUES[a.f]}`);
    for (const o of ['o0', 'o1', 'v', 'w'] as const) {
      if (a[o] !== null && (skip === null || skip[o] === null)) out.push(`${o} = ${OUT_VALUES[o][a[o]!]}`);
    }
    return out;
  };
  const lines = ['machine random_design'];
  for (let i = 0; i < d.nBits; i++) lines.push(`in a${i} : bit`);
  lines.push('in d : u4', 'out o0 : bit = 0', 'out o1 : bit = 0', 'out v : u4 = 0', 'out w : bit = 0', 'reg r : u4 reset 0', 'reg f : bit reset 0');
  d.states.forEach((s, i) => {
    lines.push('', `state S${i}${i === d.reset ? ' initial' : ''}${d.withCodes ? ` code ${s.code}` : ''}`);
    for (const a of actions(s, null)) lines.push(`  ${a}`);
    s.transitions.forEach((t, k) => {
      let cond = t.cond === null ? null : condText(t.cond);
      if (shape.everyAtom && k === 0) cond = cond === null ? atomText(i) : `${atomText(i)} and (${cond})`;
      const acts = actions(t, s);
      lines.push(`  ${cond === null ? '' : `on ${cond} `}go S${t.target % d.nStates}${acts.length ? ` with ${acts.join('; ')}` : ''}`);
    });
  });
  return lines.join('\n') + '\n';
}
