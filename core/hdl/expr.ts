// Verilog-2001 text for IR expressions, exact under Verilog's width and signedness rules.
// Every emitted expression has, self-determined, exactly the IR node's width and bit pattern.
//
// Why this is safe: the IR gives both operands of + - & | ^ and of comparisons the node's width,
// so Verilog's context widening never changes a result. The places where it could (extension,
// concatenation parts, signed shifts and compares inside unsigned surroundings) are fenced with a
// concatenation `{...}`, whose operand is always self-determined, or with $signed().
import type { Expr } from '../ir/schema';

export interface ExprNames {
  /** Verilog name of a design input as the logic sees it (e.g. after its synchronizer). */
  input(name: string): string;
  reg(name: string): string;
  /** Optional replacement of a whole subexpression by a named wire (units, status signals). */
  replace?(e: Expr): string | null;
  /** Declares a helper wire holding `text` (width, signed) and returns its name. */
  temp(text: string, width: number): string;
}

export function literal(bits: string | bigint, width: number): string {
  const v = BigInt(bits);
  if (width === 1) return `1'b${v}`;
  return width <= 32 && v < 1024n ? `${width}'d${v}` : `${width}'h${v.toString(16)}`;
}

function isName(text: string): boolean {
  return /^[A-Za-z_][A-Za-z0-9_]*$/.test(text);
}

/** Verilog for `e`; the result is self-determined `e.type.width` bits, unsigned unless stated. */
export function verilogExpr(e: Expr, n: ExprNames): string {
  const replaced = n.replace?.(e);
  if (replaced) return replaced;
  const v = (x: Expr) => verilogExpr(x, n);
  const w = e.type.width;
  switch (e.kind) {
    case 'const':
      return literal(e.bits, w);
    case 'input':
      return n.input(e.name);
    case 'reg':
      return n.reg(e.name);
    case 'unary':
      if (e.op === 'lnot') return `(!${v(e.arg)})`;
      return `{${e.op === 'neg' ? '-' : '~'}${v(e.arg)}}`;
    case 'binary': {
      const a = v(e.left);
      const b = v(e.right);
      switch (e.op) {
        case 'add':
          return `{${a} + ${b}}`;
        case 'sub':
          return `{${a} - ${b}}`;
        case 'and':
          return `(${a} & ${b})`;
        case 'or':
          return `(${a} | ${b})`;
        case 'xor':
          return `(${a} ^ ${b})`;
        case 'land':
          return `(${a} && ${b})`;
        case 'lor':
          return `(${a} || ${b})`;
        case 'eq':
          return `(${a} == ${b})`;
        case 'ne':
          return `(${a} != ${b})`;
        default: {
          const op = { lt: '<', le: '<=', gt: '>', ge: '>=' }[e.op];
          return e.left.type.signed ? `($signed(${a}) ${op} $signed(${b}))` : `(${a} ${op} ${b})`;
        }
      }
    }
    case 'shift': {
      const a = v(e.arg);
      if (e.amount >= w && !(e.dir === 'right' && e.arg.type.signed)) return literal(0n, w);
      if (e.dir === 'left') return `{${a} << ${e.amount}}`;
      if (e.arg.type.signed) return `{$signed(${a}) >>> ${Math.min(e.amount, w - 1)}}`;
      return `{${a} >> ${e.amount}}`;
    }
    case 'slice': {
      let a = v(e.arg);
      if (!isName(a)) a = n.temp(a, e.arg.type.width);
      if (e.arg.type.width === 1) return a;
      return e.msb === e.lsb ? `${a}[${e.msb}]` : `${a}[${e.msb}:${e.lsb}]`;
    }
    case 'concat':
      return `{${e.parts.map(v).join(', ')}}`;
    case 'resize': {
      const aw = e.arg.type.width;
      const a = v(e.arg);
      if (w === aw) return a;
      const k = w - aw;
      if (!e.arg.type.signed) return `{${literal(0n, k)}, ${a}}`;
      const name = isName(a) ? a : n.temp(a, aw);
      const msb = aw === 1 ? name : `${name}[${aw - 1}]`;
      return `{{${k}{${msb}}}, ${name}}`;
    }
  }
}
