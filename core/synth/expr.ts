// Expression helpers for synthesis: structural identity (ignoring source places), readable text,
// and signal names derived from what an expression computes.
import type { Expr } from '../ir/schema';
import { toSigned } from '../util/bits';

/**
 * Structural key: equal keys mean the same hardware. Source places and the names of constants are
 * ignored (`MAX_DOSE` and `200` at the same type are one value).
 */
export function exprKey(e: Expr): string {
  const t = `${e.type.signed ? 's' : 'u'}${e.type.width}`;
  switch (e.kind) {
    case 'const':
      return `#${t}:${e.bits}`;
    case 'input':
      return `in:${e.name}`;
    case 'reg':
      return `reg:${e.name}`;
    case 'unary':
      return `(${e.op}.${t} ${exprKey(e.arg)})`;
    case 'binary':
      return `(${e.op}.${t} ${exprKey(e.left)} ${exprKey(e.right)})`;
    case 'shift':
      return `(${e.dir === 'left' ? 'shl' : 'shr'}${e.amount}.${t} ${exprKey(e.arg)})`;
    case 'slice':
      return `(slice${e.msb}:${e.lsb} ${exprKey(e.arg)})`;
    case 'concat':
      return `(cat ${e.parts.map(exprKey).join(' ')})`;
    case 'resize':
      return `(rs.${t} ${exprKey(e.arg)})`;
  }
}

/** A copy without source places, for results that are compared or printed as JSON. */
export function stripLoc(e: Expr): Expr {
  switch (e.kind) {
    case 'const':
      return e.name === undefined ? { kind: 'const', type: e.type, bits: e.bits } : { kind: 'const', type: e.type, bits: e.bits, name: e.name };
    case 'input':
    case 'reg':
      return { kind: e.kind, type: e.type, name: e.name };
    case 'unary':
      return { kind: 'unary', type: e.type, op: e.op, arg: stripLoc(e.arg) };
    case 'binary':
      return { kind: 'binary', type: e.type, op: e.op, left: stripLoc(e.left), right: stripLoc(e.right) };
    case 'shift':
      return { kind: 'shift', type: e.type, dir: e.dir, amount: e.amount, arg: stripLoc(e.arg) };
    case 'slice':
      return { kind: 'slice', type: e.type, msb: e.msb, lsb: e.lsb, arg: stripLoc(e.arg) };
    case 'concat':
      return { kind: 'concat', type: e.type, parts: e.parts.map(stripLoc) };
    case 'resize':
      return { kind: 'resize', type: e.type, arg: stripLoc(e.arg) };
  }
}

const BINARY_TEXT: Record<string, string> = {
  add: '+', sub: '-', and: '&', or: '|', xor: '^', land: 'and', lor: 'or',
  eq: '==', ne: '!=', lt: '<', le: '<=', gt: '>', ge: '>=',
};

/** Design-language text of an expression; implicit widenings are not shown. */
export function exprText(e: Expr): string {
  switch (e.kind) {
    case 'const':
      return e.name ?? (e.type.signed ? toSigned(BigInt(e.bits), e.type.width) : BigInt(e.bits)).toString();
    case 'input':
    case 'reg':
      return e.name;
    case 'unary':
      return e.op === 'neg' ? `-${operandText(e.arg)}` : e.op === 'not' ? `~${operandText(e.arg)}` : `not ${operandText(e.arg)}`;
    case 'binary':
      return `${operandText(e.left)} ${BINARY_TEXT[e.op]} ${operandText(e.right)}`;
    case 'shift':
      return `${operandText(e.arg)} ${e.dir === 'left' ? '<<' : '>>'} ${e.amount}`;
    case 'slice':
      return `${operandText(e.arg)}[${e.msb === e.lsb ? e.msb : `${e.msb}:${e.lsb}`}]`;
    case 'concat':
      return e.parts.map(operandText).join(' ++ ');
    case 'resize':
      if (e.arg.type.signed !== e.type.signed && e.arg.type.width === e.type.width) return `${e.type.signed ? 'signed' : 'unsigned'}(${exprText(e.arg)})`;
      return exprText(e.arg);
  }
}

function operandText(e: Expr): string {
  const inner = e.kind === 'resize' ? e.arg : e;
  const compound = inner.kind === 'binary' || inner.kind === 'shift' || inner.kind === 'concat' || (inner.kind === 'unary' && inner.op === 'lnot');
  return compound ? `(${exprText(e)})` : exprText(e);
}

const NAME_OP: Record<string, string> = {
  add: 'plus', sub: 'minus', and: 'and', or: 'or', xor: 'xor', land: 'and', lor: 'or',
  eq: 'eq', ne: 'ne', lt: 'lt', le: 'le', gt: 'gt', ge: 'ge',
};

/** A short identifier describing the value (`poured_eq_target`, `dose_b3`), or null when none is readable. */
export function exprNameHint(e: Expr): string | null {
  const s = nameParts(e);
  return s !== null && s.length <= 40 ? s : null;
}

function nameParts(e: Expr): string | null {
  switch (e.kind) {
    case 'const':
      if (e.name !== undefined) return e.name;
      return e.type.signed && toSigned(BigInt(e.bits), e.type.width) < 0n ? `m${-toSigned(BigInt(e.bits), e.type.width)}` : e.bits;
    case 'input':
    case 'reg':
      return e.name;
    case 'resize':
      return nameParts(e.arg);
    case 'slice': {
      const a = nameParts(e.arg);
      return a === null ? null : e.msb === e.lsb ? `${a}_b${e.msb}` : `${a}_b${e.msb}_${e.lsb}`;
    }
    case 'binary': {
      const l = nameParts(e.left);
      const r = nameParts(e.right);
      return l === null || r === null ? null : `${l}_${NAME_OP[e.op]}_${r}`;
    }
    case 'unary': {
      const a = nameParts(e.arg);
      return a === null ? null : `${e.op === 'neg' ? 'neg' : 'not'}_${a}`;
    }
    case 'shift': {
      const a = nameParts(e.arg);
      return a === null ? null : `${a}_${e.dir === 'left' ? 'shl' : 'shr'}${e.amount}`;
    }
    case 'concat':
      return null;
  }
}

/** Every node of an expression, children before parents. */
export function postOrder(e: Expr, out: Expr[] = []): Expr[] {
  switch (e.kind) {
    case 'unary':
    case 'shift':
    case 'slice':
    case 'resize':
      postOrder(e.arg, out);
      break;
    case 'binary':
      postOrder(e.left, out);
      postOrder(e.right, out);
      break;
    case 'concat':
      for (const p of e.parts) postOrder(p, out);
      break;
    default:
      break;
  }
  out.push(e);
  return out;
}

/** Does the expression read no input and no register? */
export function isConstantExpr(e: Expr): boolean {
  return postOrder(e).every((n) => n.kind !== 'input' && n.kind !== 'reg');
}

/** Hands out signal names that clash neither with the design's names nor with each other. */
export interface Namer {
  fresh(candidate: string): string;
  taken(): Set<string>;
}

/**
 * Generated names keep the readable candidate when it is free; otherwise they take the `ts_`
 * prefix, which the checker keeps away from design names, then a numeric suffix.
 */
export function makeNamer(reserved: Iterable<string>): Namer {
  const used = new Set<string>(reserved);
  return {
    fresh(candidate: string): string {
      const base = /^[A-Za-z_][A-Za-z0-9_]*$/.test(candidate) ? candidate : 'sig';
      let name = base;
      if (used.has(name)) name = base.startsWith('ts_') ? base : `ts_${base}`;
      for (let k = 2; used.has(name); k++) name = `ts_${base}_${k}`;
      used.add(name);
      return name;
    },
    taken: () => new Set(used),
  };
}
