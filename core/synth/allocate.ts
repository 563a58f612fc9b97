// Datapath allocation: a register with load enable and input multiplexer per design register, a
// functional unit per distinct operation (optionally shared), output selects and the control signals.
import type { Expr, Machine } from '../ir/schema';
import { evalExpr } from '../ir/eval';
import type { ConditionAnalysis, PathRegion } from './conditions';
import { exprKey, exprText, isConstantExpr, postOrder, stripLoc, type Namer } from './expr';
import type { ControllerOutput, DataOutput, Datapath, Operation, RegisterPath, Source, StatusSignal, Unit, UnitKind } from './schema';

export interface Allocation {
  datapath: Datapath;
  /** Design outputs (1-bit, constant per path) first, then load enables and selects. */
  controlOutputs: ControllerOutput[];
  /** Per state, per path region (same order as the regions): one '0'/'1'/'-' per controller output. */
  pathOutputs: string[][];
}

/** What happens on one path through a state: the registers it loads and the values it drives. */
interface PathActions {
  transfers: Map<string, Expr>;
  outputs: Map<string, Expr>;
}

/** State actions first, then the firing transition's, which override outputs (the checker forbids double transfers). */
export function pathActions(m: Machine, state: number, transition: number | null): PathActions {
  const st = m.states[state];
  const tr = transition === null ? null : st.transitions[transition];
  const transfers = new Map<string, Expr>();
  const outputs = new Map<string, Expr>();
  for (const o of m.outputs) outputs.set(o.name, { kind: 'const', type: o.type, bits: o.defaultBits });
  for (const x of st.transfers) transfers.set(x.register, x.value);
  for (const o of st.outputs) outputs.set(o.output, o.value);
  for (const x of tr?.transfers ?? []) transfers.set(x.register, x.value);
  for (const o of tr?.outputs ?? []) outputs.set(o.output, o.value);
  return { transfers, outputs };
}

/** Loading a register with its own value is a hold: no load, no multiplexer input. */
function isHold(register: string, e: Expr): boolean {
  return e.kind === 'reg' && e.name === register;
}

const OPERATION_KIND: Record<string, UnitKind> = {
  add: 'adder', sub: 'subtractor', neg: 'negator',
  eq: 'equality comparator', ne: 'equality comparator',
  lt: 'magnitude comparator', le: 'magnitude comparator', gt: 'magnitude comparator', ge: 'magnitude comparator',
  and: 'logic unit', or: 'logic unit', xor: 'logic unit', not: 'logic unit', land: 'logic unit', lor: 'logic unit', lnot: 'logic unit',
};

const UNIT_ABBR: Record<UnitKind, string> = {
  adder: 'add', subtractor: 'sub', negator: 'neg', 'equality comparator': 'eq', 'magnitude comparator': 'cmp', shifter: 'shift', 'logic unit': 'logic',
};

/** The operation an expression node performs, or null for wiring (names, constants, slices, widenings). */
function operationOf(e: Expr): { kind: UnitKind; op: string; width: number; signed: boolean; operands: Expr[] } | null {
  if (e.kind === 'binary') return { kind: OPERATION_KIND[e.op], op: e.op, width: e.left.type.width, signed: e.left.type.signed, operands: [e.left, e.right] };
  if (e.kind === 'unary') return { kind: OPERATION_KIND[e.op], op: e.op, width: e.arg.type.width, signed: e.arg.type.signed, operands: [e.arg] };
  if (e.kind === 'shift') return { kind: 'shifter', op: `${e.dir === 'left' ? 'shl' : 'shr'}${e.amount}`, width: e.type.width, signed: e.arg.type.signed, operands: [e.arg] };
  return null;
}

/** Units may be shared only between operations of the same kind, width and function. */
function shareKey(o: Operation): string {
  const fn = o.kind === 'logic unit' || o.kind === 'shifter' ? o.op : o.kind === 'magnitude comparator' ? String(o.signed) : '';
  return `${o.kind}/${o.width}/${fn}`;
}

function bitsFor(n: number): number {
  let b = 0;
  while (1 << b < n) b++;
  return b;
}

export function allocateDatapath(m: Machine, analysis: ConditionAnalysis, regions: readonly PathRegion[][], shareUnits: boolean, namer: Namer): Allocation {
  const actions = regions.map((paths, s) => paths.map((p) => pathActions(m, s, p.transition)));

  // Outputs the controller drives: 1 bit wide and constant on every path that assigns them.
  const controlDesignOutputs = m.outputs.filter(
    (o) => o.type.width === 1 && m.states.every((s) => s.outputs.every((a) => a.output !== o.name || isConstantExpr(a.value)) && s.transitions.every((t) => t.outputs.every((a) => a.output !== o.name || isConstantExpr(a.value)))),
  );
  const controlNames = new Set(controlDesignOutputs.map((o) => o.name));

  // Operation roots: every value the datapath computes, with the states in which it is used.
  const roots: { expr: Expr; state: number }[] = [];

  const registers: RegisterPath[] = [];
  const regSourceIndex = new Map<string, Map<string, number>>();
  for (const r of m.registers) {
    const sources: Source[] = [];
    const index = new Map<string, number>();
    actions.forEach((paths, s) =>
      paths.forEach((a) => {
        const e = a.transfers.get(r.name);
        if (e === undefined || isHold(r.name, e)) return;
        roots.push({ expr: e, state: s });
        const key = exprKey(e);
        if (!index.has(key)) {
          index.set(key, sources.length);
          sources.push({ expr: stripLoc(e), text: exprText(e), from: '' });
        }
      }),
    );
    regSourceIndex.set(r.name, index);
    const loadEnable = sources.length > 0 ? namer.fresh(`ld_${r.name}`) : null;
    registers.push({ register: r.name, type: r.type, resetBits: r.resetBits, loadEnable, select: selectNames(`sel_${r.name}`, sources.length, namer), sources });
  }

  const outputs: DataOutput[] = [];
  const outSourceIndex = new Map<string, Map<string, number>>();
  for (const o of m.outputs) {
    if (controlNames.has(o.name)) continue;
    const sources: Source[] = [];
    const index = new Map<string, number>();
    actions.forEach((paths, s) =>
      paths.forEach((a) => {
        const e = a.outputs.get(o.name)!;
        roots.push({ expr: e, state: s });
        const key = exprKey(e);
        if (!index.has(key)) {
          index.set(key, sources.length);
          sources.push({ expr: stripLoc(e), text: exprText(e), from: '' });
        }
      }),
    );
    outSourceIndex.set(o.name, index);
    outputs.push({ output: o.name, type: o.type, select: selectNames(`sel_${o.name}`, sources.length, namer), sources });
  }

  for (const st of analysis.status) for (const s of st.states) roots.push({ expr: st.expr, state: s });

  const operations = collectOperations(roots);
  const unshared = operations.map((o) => [o]);
  const shared = shareOperations(operations);
  const groups = shareUnits ? shared : unshared;
  const unitOf = new Map<string, string>();
  const counters = new Map<string, number>();
  const units: Unit[] = groups.map((g) => {
    const base = `${UNIT_ABBR[g[0].kind]}${g[0].width}`;
    const k = counters.get(base) ?? 0;
    counters.set(base, k + 1);
    const name = namer.fresh(`${base}_${k}`);
    for (const o of g) unitOf.set(o.id, name);
    return { name, kind: g[0].kind, width: g[0].width, operations: g.map((o) => o.id), portSources: portSources(g) };
  });
  const opIdByKey = new Map(operations.map((o) => [exprKey(o.expr), o.id]));
  const producer = (e: Expr): string => {
    const top = postOrder(e).reverse().find((n) => operationOf(n) !== null);
    if (top) return unitOf.get(opIdByKey.get(exprKey(top))!)!;
    return e.kind === 'const' ? 'constant' : e.kind === 'input' ? 'input' : e.kind === 'reg' ? 'register' : 'wiring';
  };
  for (const r of registers) for (const src of r.sources) src.from = producer(src.expr);
  for (const o of outputs) for (const src of o.sources) src.from = producer(src.expr);
  const statusSignals: StatusSignal[] = analysis.status.map((st) => {
    const p = producer(st.expr);
    return { ...st, unit: ['constant', 'input', 'register', 'wiring'].includes(p) ? null : p };
  });

  const controlOutputs: ControllerOutput[] = [
    ...controlDesignOutputs.map((o) => ({ name: o.name, role: 'output' as const, drives: o.name, bit: null })),
    ...registers.flatMap((r) => [
      ...(r.loadEnable ? [{ name: r.loadEnable, role: 'load' as const, drives: r.register, bit: null }] : []),
      ...r.select.map((name, bit) => ({ name, role: 'select' as const, drives: r.register, bit })),
    ]),
    ...outputs.flatMap((o) => o.select.map((name, bit) => ({ name, role: 'select' as const, drives: o.output, bit }))),
  ];

  const pathOutputs = actions.map((paths) =>
    paths.map((a) =>
      controlOutputs
        .map((c) => {
          if (c.role === 'output') {
            const v = evalExpr(a.outputs.get(c.drives)!, { input: () => 0n, reg: () => 0n });
            return v !== 0n ? '1' : '0';
          }
          const regIndex = regSourceIndex.get(c.drives);
          if (regIndex) {
            const e = a.transfers.get(c.drives);
            const loaded = e !== undefined && !isHold(c.drives, e);
            if (c.role === 'load') return loaded ? '1' : '0';
            // A select is free to take any value while its register does not load.
            return loaded ? ((regIndex.get(exprKey(e))! >> c.bit!) & 1 ? '1' : '0') : '-';
          }
          const k = outSourceIndex.get(c.drives)!.get(exprKey(a.outputs.get(c.drives)!))!;
          return (k >> c.bit!) & 1 ? '1' : '0';
        })
        .join(''),
    ),
  );

  return {
    datapath: { registers, outputs, operations, units, shareUnits, unitCount: { unshared: unshared.length, shared: shared.length }, statusSignals },
    controlOutputs,
    pathOutputs,
  };
}

function selectNames(base: string, sources: number, namer: Namer): string[] {
  const n = bitsFor(sources);
  if (n === 0) return [];
  if (n === 1) return [namer.fresh(base)];
  return Array.from({ length: n }, (_, b) => namer.fresh(`${base}_${b}`));
}

/** One operation per structurally distinct node that needs gates, with the states it is active in. */
function collectOperations(roots: readonly { expr: Expr; state: number }[]): Operation[] {
  const ops: Operation[] = [];
  const byKey = new Map<string, Operation>();
  for (const { expr, state } of roots) {
    for (const n of postOrder(expr)) {
      const info = operationOf(n);
      if (!info) continue;
      const key = exprKey(n);
      let op = byKey.get(key);
      if (!op) {
        op = { id: `op${ops.length}`, kind: info.kind, op: info.op, width: info.width, signed: info.signed, expr: stripLoc(n), text: exprText(n), states: [] };
        ops.push(op);
        byKey.set(key, op);
      }
      if (!op.states.includes(state)) op.states.push(state);
    }
  }
  for (const o of ops) o.states.sort((a, b) => a - b);
  return ops;
}

/** First-fit grouping: an operation joins the first unit of its kind whose states it never shares. */
export function shareOperations(ops: readonly Operation[]): Operation[][] {
  const groups: { key: string; busy: Set<number>; ops: Operation[] }[] = [];
  for (const o of ops) {
    const key = shareKey(o);
    const g = groups.find((x) => x.key === key && o.states.every((s) => !x.busy.has(s)));
    if (g) {
      g.ops.push(o);
      for (const s of o.states) g.busy.add(s);
    } else groups.push({ key, busy: new Set(o.states), ops: [o] });
  }
  return groups.map((g) => g.ops);
}

/** Distinct operand values per input port of a (possibly shared) unit. */
function portSources(ops: readonly Operation[]): number[] {
  const ports: Set<string>[] = [];
  for (const o of ops) {
    const info = operationOf(o.expr)!;
    info.operands.forEach((x, i) => {
      (ports[i] ??= new Set()).add(exprKey(x));
    });
  }
  return ports.map((p) => p.size);
}
