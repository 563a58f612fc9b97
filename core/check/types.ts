// Width and signedness rules of the design language (see docs/language.md, "Widths").
// Two passes per expression: `selfType` finds each node's own width, `lower` builds the IR at a context width.
import type { AstExpr, Pos } from '../lang/ast';
import type { BitType, Expr } from '../ir/schema';
import { evalExpr, readsOf } from '../ir/eval';
import { bitLength, fits, maskOf, wrap } from '../util/bits';
import type { Diagnostic } from '../util/diagnostic';
import { diag } from '../util/diagnostic';

/** What a name in an expression refers to. */
export type Symbol_ =
  | { kind: 'input'; type: BitType }
  | { kind: 'reg'; type: BitType }
  | { kind: 'output'; type: BitType }
  | { kind: 'const'; type: BitType | null; value: bigint };

export interface Scope {
  lookup(name: string): Symbol_ | undefined;
  names(): string[];
  isState(name: string): boolean;
}

/**
 * Self-determined type of an expression. `flexible` marks an integer constant without a declared
 * width (a bare literal or an untyped const): it takes the width of whatever it meets, if it fits.
 */
export interface SelfType {
  width: number;
  signed: boolean;
  flexible: boolean;
  /** Exact integer value of a flexible constant. */
  value?: bigint;
}

export class TypeError_ {
  constructor(readonly diagnostic: Diagnostic) {}
}

function fail(pos: Pos, message: string, hint: string): never {
  throw new TypeError_(diag('error', pos.line, pos.col, message, hint));
}

function typeName(t: { width: number; signed: boolean }): string {
  return t.width === 1 && !t.signed ? 'bit' : `${t.signed ? 's' : 'u'}${t.width}`;
}

export { typeName };

function flexibleOf(value: bigint): SelfType {
  const width = value < 0n ? bitLength(-value - 1n) + 1 : bitLength(value);
  return { width, signed: value < 0n, flexible: true, value };
}

const ARITH = new Set(['+', '-', '&', '|', '^']);
const COMPARE = new Set(['==', '!=', '<', '<=', '>', '>=']);

/** Closest declared name, for "did you mean" hints. */
export function suggest(name: string, candidates: string[]): string | null {
  let best: string | null = null;
  let bestDist = Math.max(2, Math.floor(name.length / 3)) + 1;
  for (const c of candidates) {
    const d = editDistance(name.toLowerCase(), c.toLowerCase());
    if (d < bestDist) {
      bestDist = d;
      best = c;
    }
  }
  return best;
}

function editDistance(a: string, b: string): number {
  if (Math.abs(a.length - b.length) > 3) return 99;
  const row = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let prev = row[0];
    row[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const tmp = row[j];
      row[j] = Math.min(row[j] + 1, row[j - 1] + 1, prev + (a[i - 1] === b[j - 1] ? 0 : 1));
      prev = tmp;
    }
  }
  return row[b.length];
}

export class Typer {
  constructor(private readonly scope: Scope) {}

  private resolve(e: { name: string; pos: Pos }): Symbol_ {
    const sym = this.scope.lookup(e.name);
    if (sym) return sym;
    if (this.scope.isState(e.name)) fail(e.pos, `'${e.name}' is a state, not a value`, 'states are targets of go; compare signals instead');
    const near = suggest(e.name, this.scope.names());
    fail(e.pos, `undeclared name '${e.name}'`, near ? `did you mean '${near}'?` : 'declare it with in, reg or const');
  }

  /** Evaluates a constant expression (no signals) to an integer, e.g. a slice bound. */
  constInt(e: AstExpr, what: string): bigint {
    const t = this.selfType(e);
    if (t.flexible) return t.value!;
    const ir = this.lower(e, { width: t.width, signed: t.signed });
    const reads = readsOf(ir);
    if (reads.inputs.size || reads.regs.size) fail(e.pos, `${what} must be a constant`, 'use numbers and const names only');
    const bits = evalExpr(ir, { input: () => 0n, reg: () => 0n });
    return t.signed && bits >> BigInt(t.width - 1) ? bits - (1n << BigInt(t.width)) : bits;
  }

  selfType(e: AstExpr): SelfType {
    switch (e.k) {
      case 'num': {
        if (e.width === undefined) return flexibleOf(e.value);
        if (e.width < 1 || e.width > 64) fail(e.pos, `literal width ${e.width} is out of range`, 'widths run from 1 to 64');
        const signed = e.signed ?? false;
        if (!fits(e.value, e.width, signed)) fail(e.pos, `literal ${e.text} does not fit ${typeName({ width: e.width, signed })}`, 'widen the type suffix or change the value');
        return { width: e.width, signed, flexible: false };
      }
      case 'name': {
        const s = this.resolve(e);
        if (s.kind === 'output') fail(e.pos, `output '${e.name}' cannot be read`, 'keep the value in a register and read that');
        if (s.kind === 'const') return s.type ? { ...s.type, flexible: false } : flexibleOf(s.value);
        return { ...s.type, flexible: false };
      }
      case 'unary': {
        const a = this.selfType(e.arg);
        if (e.op === 'not') return { width: 1, signed: false, flexible: false };
        if (a.flexible) {
          if (e.op === '~') fail(e.pos, 'cannot invert a literal without a width', 'give it a width, e.g. ~5u4');
          return flexibleOf(-a.value!);
        }
        return a;
      }
      case 'binary': {
        if (e.op === 'and' || e.op === 'or') {
          this.selfType(e.left);
          this.selfType(e.right);
          return { width: 1, signed: false, flexible: false };
        }
        if (COMPARE.has(e.op)) {
          this.compareType(e.left, e.right, e.pos);
          return { width: 1, signed: false, flexible: false };
        }
        if (e.op === '++') {
          const l = this.selfType(e.left);
          const r = this.selfType(e.right);
          if (l.flexible || r.flexible) fail((l.flexible ? e.left : e.right).pos, 'a literal in a concatenation needs a width', 'write it with a suffix, e.g. 0u4');
          const width = l.width + r.width;
          if (width > 64) fail(e.pos, `concatenation is ${width} bits wide`, 'values are at most 64 bits wide');
          return { width, signed: false, flexible: false };
        }
        if (e.op === '<<' || e.op === '>>') {
          const a = this.selfType(e.left);
          const amount = this.constInt(e.right, 'a shift amount');
          if (amount < 0n || amount > 64n) fail(e.right.pos, `shift amount ${amount} is out of range`, 'shift by a constant from 0 to 64');
          if (a.flexible) fail(e.left.pos, 'cannot shift a literal without a width', 'give it a width, e.g. 1u8 << 3');
          return a;
        }
        // + - & | ^
        const l = this.selfType(e.left);
        const r = this.selfType(e.right);
        if (l.flexible && r.flexible) {
          if (e.op === '+') return flexibleOf(l.value! + r.value!);
          if (e.op === '-') return flexibleOf(l.value! - r.value!);
          fail(e.pos, `'${e.op}' between two literals without widths`, 'give one of them a width, e.g. 5u4');
        }
        if (l.flexible) return { width: r.width, signed: r.signed, flexible: false };
        if (r.flexible) return { width: l.width, signed: l.signed, flexible: false };
        if (l.signed !== r.signed) {
          fail(e.pos, `'${e.op}' mixes ${typeName(l)} and ${typeName(r)}`, 'convert one side with signed(...) or unsigned(...)');
        }
        return { width: Math.max(l.width, r.width), signed: l.signed, flexible: false };
      }
      case 'index': {
        const a = this.selfType(e.arg);
        if (a.flexible) fail(e.arg.pos, 'cannot take bits of a literal without a width', 'give it a width, e.g. 0xF0u8');
        const { msb, lsb } = this.sliceBounds(e, a.width);
        return { width: msb - lsb + 1, signed: false, flexible: false };
      }
      case 'call':
        return this.callType(e);
    }
  }

  private sliceBounds(e: Extract<AstExpr, { k: 'index' }>, width: number): { msb: number; lsb: number } {
    const msb = this.constInt(e.msb, 'a bit index');
    const lsb = e.lsb ? this.constInt(e.lsb, 'a bit index') : msb;
    if (msb < lsb) fail(e.pos, `slice [${msb}:${lsb}] runs backwards`, 'write the high bit first: x[7:4]');
    if (lsb < 0n || msb >= BigInt(width)) fail(e.pos, `bit ${msb < BigInt(width) ? lsb : msb} is outside a ${width}-bit value`, `bits run from 0 to ${width - 1}`);
    return { msb: Number(msb), lsb: Number(lsb) };
  }

  private callType(e: Extract<AstExpr, { k: 'call' }>): SelfType {
    const arity: Record<string, number> = { signed: 1, unsigned: 1, grow: 2 };
    if (!(e.fn in arity)) fail(e.pos, `unknown function '${e.fn}'`, 'functions are signed(x), unsigned(x) and grow(x, WIDTH)');
    if (e.args.length !== arity[e.fn]) fail(e.pos, `${e.fn} takes ${arity[e.fn]} argument${arity[e.fn] > 1 ? 's' : ''}, got ${e.args.length}`, e.fn === 'grow' ? 'write grow(x, 16)' : `write ${e.fn}(x)`);
    const a = this.selfType(e.args[0]);
    if (a.flexible) fail(e.args[0].pos, `${e.fn}() of a literal without a width`, 'give the literal a width, e.g. 5s8');
    if (e.fn === 'grow') {
      const n = this.constInt(e.args[1], 'the width of grow');
      if (n < BigInt(a.width) || n > 64n) fail(e.args[1].pos, `grow to ${n} bits from ${a.width} bits`, `the new width must be from ${a.width} to 64; narrow with a slice instead`);
      return { width: Number(n), signed: a.signed, flexible: false };
    }
    return { width: a.width, signed: e.fn === 'signed', flexible: false };
  }

  /** Common operand type of a comparison, or null when both sides are width-less constants. */
  private compareType(l_: AstExpr, r_: AstExpr, pos: Pos): BitType | null {
    const l = this.selfType(l_);
    const r = this.selfType(r_);
    if (l.flexible && r.flexible) return null;
    if (l.flexible) return { width: r.width, signed: r.signed };
    if (r.flexible) return { width: l.width, signed: l.signed };
    if (l.signed !== r.signed) fail(pos, `comparison of ${typeName(l)} with ${typeName(r)}`, 'convert one side with signed(...) or unsigned(...) so the comparison is unambiguous');
    return { width: Math.max(l.width, r.width), signed: l.signed };
  }

  /** Builds the IR for `e` evaluated at context type `ctx` (ctx.width >= the self width). */
  lower(e: AstExpr, ctx: BitType): Expr {
    const loc = { line: e.pos.line, col: e.pos.col };
    const self = this.selfType(e);
    if (self.flexible) return this.constant(self.value!, ctx, e.pos);
    switch (e.k) {
      case 'unary':
        if (e.op === '-' || e.op === '~') return { kind: 'unary', op: e.op === '-' ? 'neg' : 'not', type: ctx, arg: this.lower(e.arg, ctx), loc };
        break;
      case 'binary':
        if (ARITH.has(e.op)) {
          const op = ({ '+': 'add', '-': 'sub', '&': 'and', '|': 'or', '^': 'xor' } as const)[e.op as '+'];
          return { kind: 'binary', op, type: ctx, left: this.lower(e.left, ctx), right: this.lower(e.right, ctx), loc };
        }
        if (e.op === '<<' || e.op === '>>') {
          const amount = Number(this.constInt(e.right, 'a shift amount'));
          return { kind: 'shift', dir: e.op === '<<' ? 'left' : 'right', amount, type: ctx, arg: this.lower(e.left, ctx), loc };
        }
        break;
      default:
        break;
    }
    return this.resizeTo(this.lowerSelf(e, self), ctx);
  }

  /** IR for a node whose width is its own (comparisons, logic, slices, concatenations, names). */
  private lowerSelf(e: AstExpr, self: SelfType): Expr {
    const loc = { line: e.pos.line, col: e.pos.col };
    const type = { width: self.width, signed: self.signed };
    switch (e.k) {
      case 'num':
        return { kind: 'const', type, bits: wrap(e.value, self.width).toString(), loc };
      case 'name': {
        const s = this.resolve(e);
        if (s.kind === 'input') return { kind: 'input', type, name: e.name, loc };
        if (s.kind === 'reg') return { kind: 'reg', type, name: e.name, loc };
        return { kind: 'const', type, bits: wrap((s as { value: bigint }).value, self.width).toString(), name: e.name, loc };
      }
      case 'unary':
        return { kind: 'unary', op: 'lnot', type, arg: this.lowerOwn(e.arg), loc };
      case 'binary': {
        if (e.op === 'and' || e.op === 'or') return { kind: 'binary', op: e.op === 'and' ? 'land' : 'lor', type, left: this.lowerOwn(e.left), right: this.lowerOwn(e.right), loc };
        if (e.op === '++') return { kind: 'concat', type, parts: [...this.concatParts(e.left), ...this.concatParts(e.right)], loc };
        const op = ({ '==': 'eq', '!=': 'ne', '<': 'lt', '<=': 'le', '>': 'gt', '>=': 'ge' } as const)[e.op as '=='];
        const ct = this.compareType(e.left, e.right, e.pos);
        if (!ct) {
          // Both sides are width-less constants: fold to a 1-bit constant.
          const l = this.selfType(e.left).value!;
          const r = this.selfType(e.right).value!;
          const v = { eq: l === r, ne: l !== r, lt: l < r, le: l <= r, gt: l > r, ge: l >= r }[op];
          return { kind: 'const', type, bits: v ? '1' : '0', loc };
        }
        return { kind: 'binary', op, type, left: this.lower(e.left, ct), right: this.lower(e.right, ct), loc };
      }
      case 'index': {
        const a = this.selfType(e.arg);
        const { msb, lsb } = this.sliceBounds(e, a.width);
        return { kind: 'slice', msb, lsb, type, arg: this.lowerOwn(e.arg), loc };
      }
      case 'call': {
        const arg = this.lowerOwn(e.args[0]);
        return { kind: 'resize', type, arg, loc };
      }
    }
    throw new Error('unreachable: lowerSelf');
  }

  private concatParts(e: AstExpr): Expr[] {
    if (e.k === 'binary' && e.op === '++') return [...this.concatParts(e.left), ...this.concatParts(e.right)];
    return [this.lowerOwn(e)];
  }

  /** IR at the expression's own type. */
  lowerOwn(e: AstExpr): Expr {
    const t = this.selfType(e);
    return this.lower(e, { width: t.width, signed: t.signed });
  }

  private resizeTo(ir: Expr, ctx: BitType): Expr {
    if (ir.type.width === ctx.width && ir.type.signed === ctx.signed) return ir;
    return { kind: 'resize', type: ctx, arg: ir, loc: ir.loc };
  }

  private constant(value: bigint, ctx: BitType, pos: Pos): Expr {
    if (!fits(value, ctx.width, ctx.signed)) {
      const hint = value < 0n && !ctx.signed ? 'an unsigned value cannot hold a negative number; subtract instead' : `values of ${typeName(ctx)} run from ${ctx.signed ? -(1n << BigInt(ctx.width - 1)) : 0n} to ${ctx.signed ? (1n << BigInt(ctx.width - 1)) - 1n : maskOf(ctx.width)}`;
      fail(pos, `${value} does not fit ${typeName(ctx)} here`, hint);
    }
    return { kind: 'const', type: ctx, bits: wrap(value, ctx.width).toString(), loc: { line: pos.line, col: pos.col } };
  }

  /**
   * IR for a value stored into a register or driven onto an output of type `target`.
   * Widening is free; narrowing and signed-to-unsigned need an explicit slice or unsigned(...).
   */
  assign(e: AstExpr, target: BitType, what: string): Expr {
    const t = this.selfType(e);
    if (t.flexible) return this.constant(t.value!, target, e.pos);
    if (t.width > target.width) {
      fail(e.pos, `${typeName(t)} value does not fit ${what} (${typeName(target)}): it would lose ${t.width - target.width} high bit${t.width - target.width > 1 ? 's' : ''}`, `take the bits you mean explicitly, e.g. [${target.width - 1}:0]`);
    }
    if (t.signed && !target.signed) fail(e.pos, `signed value assigned to unsigned ${what} (${typeName(target)})`, 'convert with unsigned(...) if the bit pattern is what you mean');
    if (!t.signed && target.signed && t.width === target.width) {
      fail(e.pos, `unsigned ${typeName(t)} value may not fit signed ${what} (${typeName(target)})`, 'widen the target or convert with signed(...)');
    }
    const ir = this.lower(e, { width: target.width, signed: t.signed });
    return this.resizeTo(ir, target);
  }

  /** IR for a transition condition: must be one bit wide. */
  condition(e: AstExpr): Expr {
    const t = this.selfType(e);
    if (t.flexible) {
      if (t.value === 0n || t.value === 1n) return this.constant(t.value, { width: 1, signed: false }, e.pos);
      fail(e.pos, `condition is the number ${t.value}`, 'a condition is one bit: use 1, 0 or a comparison');
    }
    if (t.width !== 1) fail(e.pos, `condition is ${t.width} bits wide`, 'compare it to make one bit, e.g. x != 0');
    return this.lowerOwn(e);
  }
}
