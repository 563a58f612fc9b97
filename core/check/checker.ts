// The checker: syntax tree in, typed IR plus diagnostics out. It never throws on any input;
// an internal fault becomes an error diagnostic so that a caller always gets an answer.
import type { AstDesign, AstExpr, AstOutputAssign, AstTransfer, Pos } from '../lang/ast';
import { parseDesign } from '../lang/parser';
import type { BitType, Constant, Expr, Input, Machine, Output, OutputAssign, Register, State, Transfer, Transition } from '../ir/schema';
import { evalExpr, readsOf } from '../ir/eval';
import { fits, wrap } from '../util/bits';
import { diag, hasErrors, sortDiagnostics, type Diagnostic } from '../util/diagnostic';
import { TypeError_, Typer, typeName, type Scope, type Symbol_ } from './types';
import { VERILOG_RESERVED } from './reserved';

export interface CheckResult {
  machine: Machine | null;
  diagnostics: Diagnostic[];
}

/** Parse and check a design text. `machine` is null exactly when there is at least one error. */
export function checkDesign(text: string, file = 'design.tsm'): CheckResult {
  try {
    const { ast, diagnostics } = parseDesign(text);
    const checked = new Checker(ast, file).run();
    const all = sortDiagnostics([...diagnostics, ...checked.diagnostics]);
    return { machine: hasErrors(all) ? null : checked.machine, diagnostics: all };
  } catch (e) {
    // A fault in the checker itself must still reach the user as a message, not a crash.
    const message = e instanceof Error ? e.message : String(e);
    return { machine: null, diagnostics: [diag('error', 1, 1, `internal checker fault: ${message}`, 'please report this design file to the Twinstep developers')] };
  }
}

class Checker {
  private diagnostics: Diagnostic[] = [];
  private symbols = new Map<string, Symbol_ & { pos: Pos }>();
  private stateIndex = new Map<string, number>();
  private typer: Typer;

  constructor(private readonly ast: AstDesign, private readonly file: string) {
    const scope: Scope = {
      lookup: (name) => this.symbols.get(name),
      names: () => [...this.symbols.keys()],
      isState: (name) => this.stateIndex.has(name),
    };
    this.typer = new Typer(scope);
  }

  private error(pos: Pos, message: string, hint: string): void {
    this.diagnostics.push(diag('error', pos.line, pos.col, message, hint));
  }

  private warn(pos: Pos, message: string, hint: string): void {
    this.diagnostics.push(diag('warning', pos.line, pos.col, message, hint));
  }

  /** Runs `f`, turning a type error into a diagnostic; returns undefined on error. */
  private guard<T>(f: () => T): T | undefined {
    try {
      return f();
    } catch (e) {
      if (e instanceof TypeError_) {
        this.diagnostics.push(e.diagnostic);
        return undefined;
      }
      throw e;
    }
  }

  private declare(name: string, pos: Pos, sym: Symbol_): boolean {
    const prev = this.symbols.get(name);
    if (prev) {
      this.error(pos, `'${name}' is already declared (line ${prev.pos.line})`, 'every input, output, register and constant needs its own name');
      return false;
    }
    if (VERILOG_RESERVED.has(name)) {
      this.error(pos, `'${name}' is a reserved word of Verilog`, 'the generated HDL could not use it; choose another name');
      return false;
    }
    if (name.startsWith('ts_')) {
      this.error(pos, `names starting with 'ts_' are kept for generated signals`, 'choose another name');
      return false;
    }
    this.symbols.set(name, { ...sym, pos });
    return true;
  }

  private constantBits(e: AstExpr, type: BitType, what: string): bigint | undefined {
    return this.guard(() => {
      const ir = this.typer.assign(e, type, what);
      const reads = readsOf(ir);
      if (reads.inputs.size || reads.regs.size) {
        this.error(e.pos, `${what} must be a constant`, 'use numbers and const names only');
        return undefined;
      }
      return evalExpr(ir, { input: () => 0n, reg: () => 0n });
    });
  }

  run(): { machine: Machine; diagnostics: Diagnostic[] } {
    const ast = this.ast;
    if (!ast.machine) this.error({ line: 1, col: 1 }, "the design has no 'machine' line", 'start the file with: machine NAME');

    ast.states.forEach((s, i) => {
      if (this.stateIndex.has(s.name)) this.error(s.pos, `state '${s.name}' is declared twice (line ${ast.states[this.stateIndex.get(s.name)!].pos.line})`, 'rename one of them');
      else this.stateIndex.set(s.name, i);
    });

    const constants: Constant[] = [];
    for (const c of ast.constants) {
      const value = this.guard(() => {
        if (c.type) {
          const bits = this.constantBits(c.value, c.type, `constant '${c.name}'`);
          return bits === undefined ? undefined : { type: { width: c.type.width, signed: c.type.signed }, bits };
        }
        const v = this.typer.constInt(c.value, `constant '${c.name}'`);
        if (!fits(v, 64, v < 0n)) {
          this.error(c.value.pos, `constant '${c.name}' = ${v} does not fit 64 bits`, 'values are at most 64 bits wide');
          return undefined;
        }
        return { type: null, bits: v };
      });
      if (!value) continue;
      if (value.type) {
        const signedValue = value.type.signed && value.bits >> BigInt(value.type.width - 1) ? value.bits - (1n << BigInt(value.type.width)) : value.bits;
        if (this.declare(c.name, c.pos, { kind: 'const', type: value.type, value: signedValue })) {
          constants.push({ name: c.name, type: value.type, bits: value.bits.toString(), loc: c.pos });
        }
      } else if (this.declare(c.name, c.pos, { kind: 'const', type: null, value: value.bits })) {
        const width = Math.max(1, value.bits < 0n ? (-value.bits - 1n).toString(2).length + 1 : value.bits.toString(2).length);
        constants.push({ name: c.name, type: { width, signed: value.bits < 0n }, bits: wrap(value.bits, width).toString(), loc: c.pos });
      }
    }

    const inputs: Input[] = [];
    for (const i of ast.inputs) {
      const type = { width: i.type.width, signed: i.type.signed };
      if (this.declare(i.name, i.pos, { kind: 'input', type })) inputs.push({ name: i.name, type, synchronize: type.width === 1 && !i.synced, loc: i.pos });
      if (i.synced && type.width > 1) this.warn(i.pos, `'synced' on multi-bit input '${i.name}' has no effect`, 'only 1-bit inputs get synchronizers; multi-bit inputs must be stable when sampled');
    }

    const outputs: Output[] = [];
    for (const o of ast.outputs) {
      const type = { width: o.type.width, signed: o.type.signed };
      let bits: bigint | undefined = 0n;
      if (!o.defaultValue) this.error(o.pos, `output '${o.name}' has no default value`, `write: out ${o.name} : ${typeName(type)} = 0`);
      else bits = this.constantBits(o.defaultValue, type, `the default of output '${o.name}'`);
      if (this.declare(o.name, o.pos, { kind: 'output', type })) outputs.push({ name: o.name, type, defaultBits: (bits ?? 0n).toString(), loc: o.pos });
    }

    const registers: Register[] = [];
    for (const r of ast.registers) {
      const type = { width: r.type.width, signed: r.type.signed };
      const bits = r.reset ? this.constantBits(r.reset, type, `the reset value of '${r.name}'`) : 0n;
      if (this.declare(r.name, r.pos, { kind: 'reg', type })) registers.push({ name: r.name, type, resetBits: (bits ?? 0n).toString(), loc: r.pos });
    }

    const states = ast.states.map((s) => this.checkState(s));
    const resetState = this.findResetState();
    this.checkCodes();
    if (ast.states.length === 0) this.error({ line: 1, col: 1 }, 'the design has no states', 'add at least one: state Idle');

    const machine: Machine = {
      irVersion: 1,
      name: ast.machine?.name ?? 'unnamed',
      clockHz: ast.clock?.hz ?? null,
      inputs,
      outputs,
      registers,
      constants,
      states,
      resetState,
      file: this.file,
    };
    if (states.length > 0) this.checkGraph(machine);
    return { machine, diagnostics: this.diagnostics };
  }

  private findResetState(): number {
    const initial = this.ast.states.map((s, i) => ({ s, i })).filter(({ s }) => s.initial);
    if (initial.length > 1) {
      for (const { s } of initial.slice(1)) this.error(s.pos, `second initial state '${s.name}' (the first is '${initial[0].s.name}')`, 'mark exactly one state initial, or none to use the first');
    }
    return initial.length ? initial[0].i : 0;
  }

  private checkCodes(): void {
    const withCode = this.ast.states.filter((s) => s.code);
    if (withCode.length === 0) return;
    const seen = new Map<bigint, string>();
    for (const s of this.ast.states) {
      if (!s.code) {
        this.error(s.pos, `state '${s.name}' has no code while other states do`, 'give every state a code, or none');
        continue;
      }
      const v = this.guard(() => this.typer.constInt(s.code!, 'a state code'));
      if (v === undefined) continue;
      if (v < 0n || v > 0xffffffffn) this.error(s.code.pos, `state code ${v} is out of range`, 'codes run from 0 to 2^32-1');
      else if (seen.has(v)) this.error(s.code.pos, `state code ${v} is already used by '${seen.get(v)}'`, 'state codes must be unique');
      else seen.set(v, s.name);
    }
  }

  private stateCode(s: AstDesign['states'][number]): number | null {
    if (!s.code) return null;
    try {
      const v = this.typer.constInt(s.code, 'a state code');
      return v >= 0n && v <= 0xffffffffn ? Number(v) : null;
    } catch {
      return null;
    }
  }

  private checkState(s: AstDesign['states'][number]): State {
    const transfers = this.transfers(s.transfers, `state '${s.name}'`);
    const outputs = this.outputAssigns(s.outputs, `state '${s.name}'`);
    const transitions: Transition[] = [];
    for (const t of s.transitions) {
      const target = this.stateIndex.get(t.target);
      if (target === undefined) {
        const near = [...this.stateIndex.keys()].find((n) => n.toLowerCase() === t.target.toLowerCase());
        this.error(t.targetPos, `no state named '${t.target}'`, near ? `did you mean '${near}'?` : 'declare it with: state ' + t.target);
      }
      const condition = t.condition ? this.guard(() => this.typer.condition(t.condition!)) : null;
      const trTransfers = this.transfers(t.transfers, 'this transition');
      const trOutputs = this.outputAssigns(t.outputs, 'this transition');
      // One path = the state's own actions plus the actions of the transition that fires.
      for (const x of trTransfers) {
        const clash = transfers.find((y) => y.register === x.register);
        if (clash) this.error(x.loc, `second transfer to '${x.register}' on one path (the state's own is on line ${clash.loc.line})`, 'a register takes one value per clock edge; move the transfer to the state or to each transition');
      }
      for (const x of trOutputs) {
        const clash = outputs.find((y) => y.output === x.output);
        if (clash) this.error(x.loc, `output '${x.output}' driven twice on one path (the state drives it on line ${clash.loc.line})`, 'drive it either in the state or on its transitions');
      }
      transitions.push({ target: target ?? 0, condition: condition ?? null, transfers: trTransfers, outputs: trOutputs, loc: t.pos });
    }
    return { name: s.name, code: this.stateCode(s), transfers, outputs, transitions, loc: s.pos };
  }

  private transfers(list: AstTransfer[], where: string): Transfer[] {
    const out: Transfer[] = [];
    for (const t of list) {
      const sym = this.symbols.get(t.target);
      if (!sym) {
        this.error(t.pos, `undeclared register '${t.target}'`, `declare it: reg ${t.target} : u8 reset 0`);
        continue;
      }
      if (sym.kind === 'input') {
        this.error(t.pos, `'${t.target}' is an input and cannot be assigned`, 'inputs are driven from outside the machine');
        continue;
      }
      if (sym.kind === 'output') {
        this.error(t.pos, `'${t.target}' is an output; outputs take '=' not '<-'`, `write: ${t.target} = value`);
        continue;
      }
      if (sym.kind === 'const') {
        this.error(t.pos, `'${t.target}' is a constant and cannot be assigned`, 'declare a register instead');
        continue;
      }
      const prev = out.find((x) => x.register === t.target);
      if (prev) {
        this.error(t.pos, `second transfer to '${t.target}' in ${where} (the first is on line ${prev.loc.line})`, 'a register takes one value per clock edge');
        continue;
      }
      const value = this.guard(() => this.typer.assign(t.value, sym.type, `register '${t.target}'`));
      if (value) out.push({ register: t.target, value, loc: t.pos });
    }
    return out;
  }

  private outputAssigns(list: AstOutputAssign[], where: string): OutputAssign[] {
    const out: OutputAssign[] = [];
    for (const t of list) {
      const sym = this.symbols.get(t.target);
      if (!sym) {
        this.error(t.pos, `undeclared output '${t.target}'`, `declare it: out ${t.target} : bit = 0`);
        continue;
      }
      if (sym.kind !== 'output') {
        const hint = sym.kind === 'reg' ? `registers take '<-': ${t.target} <- value` : 'only outputs take =';
        this.error(t.pos, `'${t.target}' is ${sym.kind === 'input' ? 'an input' : sym.kind === 'reg' ? 'a register' : 'a constant'}, not an output`, hint);
        continue;
      }
      const prev = out.find((x) => x.output === t.target);
      if (prev) {
        this.error(t.pos, `output '${t.target}' driven twice in ${where} (first on line ${prev.loc.line})`, 'drive each output once');
        continue;
      }
      const value = this.guard(() => this.typer.assign(t.value, sym.type, `output '${t.target}'`));
      if (value) out.push({ output: t.target, value, loc: t.pos });
    }
    return out;
  }

  private checkGraph(m: Machine): void {
    // Reachability from the reset state.
    const seen = new Set<number>([m.resetState]);
    const queue = [m.resetState];
    while (queue.length) {
      const s = queue.pop()!;
      for (const t of m.states[s].transitions) {
        if (conditionTruth(t.condition, m) === 'never') continue;
        if (!seen.has(t.target)) {
          seen.add(t.target);
          queue.push(t.target);
        }
      }
    }
    m.states.forEach((s, i) => {
      if (!seen.has(i)) this.warn(s.loc, `state '${s.name}' cannot be reached from the initial state '${m.states[m.resetState].name}'`, 'add a transition into it or remove it');
      if (!s.transitions.some((t) => t.target !== i)) this.warn(s.loc, `state '${s.name}' has no way out`, 'the machine stays here until reset; add a transition if that is not intended');
      let alwaysAt: Transition | null = null;
      for (const t of s.transitions) {
        if (alwaysAt) {
          this.warn(t.loc, `this transition never fires: the one on line ${alwaysAt.loc.line} always fires first`, 'reorder the transitions or drop this one');
          continue;
        }
        const truth = conditionTruth(t.condition, m);
        if (truth === 'always') alwaysAt = t;
        if (truth === 'never') this.warn(t.loc, 'this transition never fires: its condition is always false', 'check the condition');
      }
    });
  }
}

/**
 * Decides whether a condition is always true, never true, or depends on the inputs. Exhaustive over
 * the bits it reads when there are at most 12 of them; otherwise only constants are decided.
 */
export function conditionTruth(cond: Expr | null, m: Machine): 'always' | 'never' | 'depends' {
  if (!cond) return 'always';
  const reads = readsOf(cond);
  const signals: { name: string; kind: 'input' | 'reg'; width: number }[] = [];
  for (const n of reads.inputs) signals.push({ name: n, kind: 'input', width: m.inputs.find((i) => i.name === n)!.type.width });
  for (const n of reads.regs) signals.push({ name: n, kind: 'reg', width: m.registers.find((r) => r.name === n)!.type.width });
  const total = signals.reduce((a, s) => a + s.width, 0);
  if (total > 12) return 'depends';
  let sawTrue = false;
  let sawFalse = false;
  for (let v = 0; v < 1 << total; v++) {
    const values = new Map<string, bigint>();
    let shift = 0;
    for (const s of signals) {
      values.set(s.kind + ':' + s.name, BigInt((v >> shift) & ((1 << s.width) - 1)));
      shift += s.width;
    }
    const r = evalExpr(cond, { input: (n) => values.get('input:' + n) ?? 0n, reg: (n) => values.get('reg:' + n) ?? 0n });
    if (r) sawTrue = true;
    else sawFalse = true;
    if (sawTrue && sawFalse) return 'depends';
  }
  return sawTrue ? 'always' : 'never';
}

export type { Expr, Machine };
