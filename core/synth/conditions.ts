// Splits transition conditions into controller inputs: 1-bit design inputs stay direct, every other
// test (comparisons, register bits, tests of multi-bit values) becomes a status signal of the datapath.
import type { Expr, Machine } from '../ir/schema';
import { FALSE, TRUE, makeBdd, type Bdd, type BddRef } from './bdd';
import { exprKey, exprNameHint, exprText, stripLoc, type Namer } from './expr';
import type { BoolExpr, ControllerInput, StatusSignal } from './schema';

export interface ConditionAnalysis {
  /** 1-bit design inputs (declaration order), then status signals (first use order). */
  inputs: ControllerInput[];
  /** Status signals, not yet tied to functional units. */
  status: Omit<StatusSignal, 'unit'>[];
  /** Per state, per transition: the condition over controller inputs (null: unconditional). */
  conditions: (BoolExpr | null)[][];
}

const COMPLEMENT: Record<string, string> = { eq: 'ne', ne: 'eq', lt: 'ge', ge: 'lt', gt: 'le', le: 'gt' };
const COMPARISONS = new Set(Object.keys(COMPLEMENT));

/** Walks every condition once; status signals are shared between states and with their complements. */
export function analyseConditions(m: Machine, namer: Namer): ConditionAnalysis {
  const usedInputs = new Set<string>();
  const status: Omit<StatusSignal, 'unit'>[] = [];
  const byKey = new Map<string, number>();
  const oneBitInputs = new Set(m.inputs.filter((i) => i.type.width === 1).map((i) => i.name));

  /** The status signal carrying `e` (a 1-bit test), reusing one that carries its complement. */
  function statusAtom(e: Expr, state: number): BoolExpr {
    const key = exprKey(e);
    let index = byKey.get(key);
    let negate = false;
    if (index === undefined && e.kind === 'binary' && COMPARISONS.has(e.op)) {
      const other = byKey.get(exprKey({ ...e, op: COMPLEMENT[e.op] as typeof e.op }));
      if (other !== undefined) {
        index = other;
        negate = true;
      }
    }
    if (index === undefined) {
      index = status.length;
      const hint = exprNameHint(e);
      const name = namer.fresh(hint !== null ? `st_${hint}` : `st_${index}`);
      status.push({ name, expr: stripLoc(e), text: exprText(e), kind: statusKind(e), states: [] });
      byKey.set(key, index);
    }
    const s = status[index];
    if (!s.states.includes(state)) s.states.push(state);
    const v: BoolExpr = { k: 'var', name: s.name };
    return negate ? { k: 'not', arg: v } : v;
  }

  /** `e != 0` as a controller-level value. */
  function truth(e: Expr, state: number): BoolExpr {
    if (e.type.width === 1) return toBool(e, state);
    const zero: Expr = { kind: 'const', type: e.type, bits: '0' };
    return statusAtom({ kind: 'binary', type: { width: 1, signed: false }, op: 'ne', left: e, right: zero }, state);
  }

  /** A 1-bit expression as connectives over controller inputs. */
  function toBool(e: Expr, state: number): BoolExpr {
    switch (e.kind) {
      case 'const':
        return { k: 'const', value: BigInt(e.bits) !== 0n };
      case 'input':
        if (oneBitInputs.has(e.name)) {
          usedInputs.add(e.name);
          return { k: 'var', name: e.name };
        }
        return statusAtom(e, state);
      case 'unary':
        if (e.op === 'lnot') return { k: 'not', arg: truth(e.arg, state) };
        if (e.op === 'not') return { k: 'not', arg: toBool(e.arg, state) };
        return statusAtom(e, state); // 1-bit negation is the identity on the bit, but keep it literal
      case 'binary':
        if (e.op === 'land' || e.op === 'lor') return { k: e.op === 'land' ? 'and' : 'or', left: truth(e.left, state), right: truth(e.right, state) };
        if (e.op === 'and' || e.op === 'or' || e.op === 'xor') return { k: e.op, left: toBool(e.left, state), right: toBool(e.right, state) };
        if ((e.op === 'eq' || e.op === 'ne') && e.left.type.width === 1) {
          const x: BoolExpr = { k: 'xor', left: toBool(e.left, state), right: toBool(e.right, state) };
          return e.op === 'ne' ? x : { k: 'not', arg: x };
        }
        return statusAtom(e, state);
      case 'resize':
        if (e.arg.type.width === 1) return toBool(e.arg, state);
        return statusAtom(e, state);
      case 'slice':
        if (e.arg.type.width === 1) return toBool(e.arg, state);
        return statusAtom(e, state);
      case 'concat':
        if (e.parts.length === 1) return toBool(e.parts[0], state);
        return statusAtom(e, state);
      default:
        return statusAtom(e, state);
    }
  }

  const conditions = m.states.map((s, si) => s.transitions.map((t) => (t.condition === null ? null : toBool(t.condition, si))));
  const inputs: ControllerInput[] = [
    ...m.inputs.filter((i) => usedInputs.has(i.name)).map((i) => ({ name: i.name, from: 'input' as const })),
    ...status.map((s) => ({ name: s.name, from: 'status' as const })),
  ];
  for (const s of status) s.states.sort((a, b) => a - b);
  return { inputs, status, conditions };
}

function statusKind(e: Expr): StatusSignal['kind'] {
  if (e.kind === 'binary' && COMPARISONS.has(e.op)) return 'comparator';
  if (e.kind === 'reg' || e.kind === 'input') return 'bit tap';
  if (e.kind === 'slice' && e.msb === e.lsb && (e.arg.kind === 'reg' || e.arg.kind === 'input')) return 'bit tap';
  return 'logic';
}

/** A condition as a decision diagram over the controller inputs (index by name). */
export function conditionBdd(bdd: Bdd, e: BoolExpr | null, index: ReadonlyMap<string, number>): BddRef {
  if (e === null) return TRUE;
  switch (e.k) {
    case 'const':
      return e.value ? TRUE : FALSE;
    case 'var': {
      const i = index.get(e.name);
      if (i === undefined) throw new Error(`condition reads '${e.name}', which is not a controller input`);
      return bdd.variable(i);
    }
    case 'not':
      return bdd.not(conditionBdd(bdd, e.arg, index));
    case 'and':
      return bdd.and(conditionBdd(bdd, e.left, index), conditionBdd(bdd, e.right, index));
    case 'or':
      return bdd.or(conditionBdd(bdd, e.left, index), conditionBdd(bdd, e.right, index));
    case 'xor':
      return bdd.xor(conditionBdd(bdd, e.left, index), conditionBdd(bdd, e.right, index));
  }
}

/** The input region where one path of a state is taken: a transition (by index) or the implicit stay. */
export interface PathRegion {
  transition: number | null;
  /** Disjoint cubes over all controller inputs; never empty (paths that cannot happen are left out). */
  cubes: string[];
}

/**
 * Priority semantics: transition i fires where its condition holds and no earlier one does; the
 * machine stays where none holds. The regions of one state are disjoint and cover every input.
 */
export function pathRegions(inputs: readonly ControllerInput[], conditions: readonly (BoolExpr | null)[]): PathRegion[] {
  const index = new Map(inputs.map((x, i) => [x.name, i]));
  const bdd = makeBdd(inputs.length);
  const out: PathRegion[] = [];
  let earlier: BddRef = FALSE;
  conditions.forEach((c, i) => {
    const f = conditionBdd(bdd, c, index);
    const fires = bdd.and(f, bdd.not(earlier));
    if (fires !== FALSE) out.push({ transition: i, cubes: bdd.cubes(fires) });
    earlier = bdd.or(earlier, f);
  });
  const stay = bdd.not(earlier);
  if (stay !== FALSE) out.push({ transition: null, cubes: bdd.cubes(stay) });
  return out;
}
