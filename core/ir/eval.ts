// Reference evaluation of IR expressions on bigint bit patterns. Slow and obviously right:
// the interpreter, the constant folder and the tests all use it as the meaning of an expression.
import { extend, maskOf, toSigned, wrap } from '../util/bits';
import type { Expr } from './schema';

export interface Env {
  input(name: string): bigint;
  reg(name: string): bigint;
}

export function evalExpr(e: Expr, env: Env): bigint {
  const w = e.type.width;
  switch (e.kind) {
    case 'const':
      return BigInt(e.bits);
    case 'input':
      return env.input(e.name);
    case 'reg':
      return env.reg(e.name);
    case 'unary': {
      const a = evalExpr(e.arg, env);
      if (e.op === 'neg') return wrap(-a, w);
      if (e.op === 'not') return wrap(~a, w);
      return a === 0n ? 1n : 0n;
    }
    case 'binary': {
      const a = evalExpr(e.left, env);
      const b = evalExpr(e.right, env);
      const ow = e.left.type.width;
      const signed = e.left.type.signed;
      switch (e.op) {
        case 'add':
          return wrap(a + b, w);
        case 'sub':
          return wrap(a - b, w);
        case 'and':
          return a & b;
        case 'or':
          return a | b;
        case 'xor':
          return a ^ b;
        case 'land':
          return a !== 0n && b !== 0n ? 1n : 0n;
        case 'lor':
          return a !== 0n || b !== 0n ? 1n : 0n;
        case 'eq':
          return a === b ? 1n : 0n;
        case 'ne':
          return a !== b ? 1n : 0n;
        default: {
          const x = signed ? toSigned(a, ow) : a;
          const y = signed ? toSigned(b, ow) : b;
          const r = e.op === 'lt' ? x < y : e.op === 'le' ? x <= y : e.op === 'gt' ? x > y : x >= y;
          return r ? 1n : 0n;
        }
      }
    }
    case 'shift': {
      const a = evalExpr(e.arg, env);
      if (e.dir === 'left') return wrap(a << BigInt(e.amount), w);
      // Right shift: arithmetic for signed operands, logical for unsigned ones.
      return e.arg.type.signed ? wrap(toSigned(a, w) >> BigInt(e.amount), w) : a >> BigInt(e.amount);
    }
    case 'slice':
      return (evalExpr(e.arg, env) >> BigInt(e.lsb)) & maskOf(e.msb - e.lsb + 1);
    case 'concat': {
      let v = 0n;
      for (const p of e.parts) v = (v << BigInt(p.type.width)) | evalExpr(p, env);
      return v;
    }
    case 'resize':
      return extend(evalExpr(e.arg, env), e.arg.type.width, w, e.arg.type.signed);
  }
}

/** Names of the inputs and registers an expression reads. */
export function readsOf(e: Expr, out: { inputs: Set<string>; regs: Set<string> } = { inputs: new Set(), regs: new Set() }) {
  switch (e.kind) {
    case 'input':
      out.inputs.add(e.name);
      break;
    case 'reg':
      out.regs.add(e.name);
      break;
    case 'unary':
    case 'shift':
    case 'slice':
    case 'resize':
      readsOf(e.arg, out);
      break;
    case 'binary':
      readsOf(e.left, out);
      readsOf(e.right, out);
      break;
    case 'concat':
      for (const p of e.parts) readsOf(p, out);
      break;
    default:
      break;
  }
  return out;
}
