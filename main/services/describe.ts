// Turns the checked IR into the summary the screens show: signals, states, and transitions with
// their conditions printed back in the design language (resize nodes are invisible to people).
import type { Expr, Machine, OutputAssign, Transfer } from '../../core/ir/schema';
import type { MachineSummary } from '../../core/services/api';

const BINARY_TEXT: Record<string, { text: string; prec: number }> = {
  lor: { text: 'or', prec: 1 },
  land: { text: 'and', prec: 2 },
  eq: { text: '==', prec: 4 },
  ne: { text: '!=', prec: 4 },
  lt: { text: '<', prec: 4 },
  le: { text: '<=', prec: 4 },
  gt: { text: '>', prec: 4 },
  ge: { text: '>=', prec: 4 },
  or: { text: '|', prec: 5 },
  xor: { text: '^', prec: 6 },
  and: { text: '&', prec: 7 },
  add: { text: '+', prec: 10 },
  sub: { text: '-', prec: 10 },
};

/** Precedence levels of the design language, loosest first (as its parser reads them). */
const CONCAT_PREC = 8;
const SHIFT_PREC = 9;
const UNARY_PREC = 11;
const POSTFIX_PREC = 12;

function constText(bits: string, width: number, signed: boolean): string {
  const v = BigInt(bits);
  if (signed && width > 0 && v >> BigInt(width - 1)) return (v - (1n << BigInt(width))).toString();
  return v.toString();
}

/** Prints an expression with the fewest parentheses that keep its meaning. */
export function exprText(e: Expr, parentPrec = 0): string {
  const wrap = (s: string, prec: number) => (prec < parentPrec ? `(${s})` : s);
  switch (e.kind) {
    case 'const':
      return e.name ?? constText(e.bits, e.type.width, e.type.signed);
    case 'input':
    case 'reg':
      return e.name;
    case 'resize':
      return exprText(e.arg, parentPrec);
    case 'unary': {
      const op = e.op === 'lnot' ? 'not ' : e.op === 'neg' ? '-' : '~';
      const prec = e.op === 'lnot' ? 3 : UNARY_PREC;
      return wrap(op + exprText(e.arg, prec + 1), prec);
    }
    case 'binary': {
      const b = BINARY_TEXT[e.op];
      // Comparisons do not chain, so a comparison operand of a comparison needs parentheses on both sides.
      const leftPrec = b.prec === 4 ? 5 : b.prec;
      return wrap(`${exprText(e.left, leftPrec)} ${b.text} ${exprText(e.right, b.prec + 1)}`, b.prec);
    }
    case 'shift':
      return wrap(`${exprText(e.arg, SHIFT_PREC)} ${e.dir === 'left' ? '<<' : '>>'} ${e.amount}`, SHIFT_PREC);
    case 'slice':
      return `${exprText(e.arg, POSTFIX_PREC)}[${e.msb === e.lsb ? e.msb : `${e.msb}:${e.lsb}`}]`;
    case 'concat':
      return wrap(e.parts.map((p) => exprText(p, CONCAT_PREC + 1)).join(' ++ '), CONCAT_PREC);
  }
}

function actionTexts(outputs: OutputAssign[], transfers: Transfer[]): string[] {
  return [...outputs.map((o) => `${o.output} = ${exprText(o.value)}`), ...transfers.map((t) => `${t.register} <- ${exprText(t.value)}`)];
}

export function summarize(m: Machine): MachineSummary {
  const signal = (s: { name: string; type: { width: number; signed: boolean } }) => ({ name: s.name, width: s.type.width, signed: s.type.signed });
  return {
    name: m.name,
    clockHz: m.clockHz,
    inputs: m.inputs.map(signal),
    outputs: m.outputs.map(signal),
    registers: m.registers.map(signal),
    states: m.states.map((s, i) => ({ name: s.name, initial: i === m.resetState, code: s.code, actions: actionTexts(s.outputs, s.transfers), line: s.loc.line })),
    edges: m.states.flatMap((s, from) =>
      s.transitions.map((t, priority) => ({
        from,
        to: t.target,
        priority,
        condition: t.condition ? exprText(t.condition) : null,
        actions: actionTexts(t.outputs, t.transfers),
      })),
    ),
  };
}
