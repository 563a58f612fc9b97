// The compiled model: turns the IR into one JavaScript step function, numbers for values of up to
// 32 bits and BigInt beyond. It must agree with the interpreter cycle for cycle (see tests/model-*).
import type { Expr, Machine } from '../ir/schema';

/** A value as the compiled model holds it: a number for widths up to 32, a bigint above. */
export type RepValue = number | bigint;

export interface CompiledModel {
  /** Back to the reset state and reset register values. */
  reset(): void;
  /**
   * One clock cycle: reads `inputs` (machine.inputs order), writes the outputs of this cycle into
   * `outputs` (machine.outputs order), advances state and registers, returns the fired transition
   * index or -1 for the implicit stay.
   */
  step(inputs: ArrayLike<RepValue>, outputs: RepValue[]): number;
  /** Current state index. */
  state(): number;
  /** Current register values (machine.registers order), in the compiled representation. */
  regs(): RepValue[];
  /** Overwrite state and registers, e.g. to follow the board after a divergence. */
  load(state: number, regs: ArrayLike<RepValue>): void;
  /** The generated source, for inspection. */
  source: string;
}

const big = (w: number) => w > 32;

/** Bigint bit pattern to the compiled representation for a given width. */
export function toRep(value: bigint, width: number): RepValue {
  return big(width) ? value : Number(value);
}

export function fromRep(value: RepValue): bigint {
  return typeof value === 'bigint' ? value : BigInt(value);
}

function mask(w: number): string {
  return big(w) ? `${(1n << BigInt(w)) - 1n}n` : `${2 ** w - 1}`;
}

/** Wraps a small (<= 32-bit) integer expression to `w` bits. */
function wrapSmall(x: string, w: number): string {
  return w === 32 ? `((${x}) >>> 0)` : `((${x}) & ${mask(w)})`;
}

/** A small bit pattern of width `w` read as a signed int32. */
function signedSmall(x: string, w: number): string {
  return w === 32 ? `((${x}) | 0)` : `(((${x}) << ${32 - w}) >> ${32 - w})`;
}

function zero(w: number): string {
  return big(w) ? '0n' : '0';
}

export function compileExpr(e: Expr, names: { input: (n: string) => string; reg: (n: string) => string }): string {
  const g = (x: Expr) => compileExpr(x, names);
  const w = e.type.width;
  switch (e.kind) {
    case 'const':
      return big(w) ? `${e.bits}n` : e.bits;
    case 'input':
      return names.input(e.name);
    case 'reg':
      return names.reg(e.name);
    case 'unary': {
      const a = g(e.arg);
      if (e.op === 'lnot') return `((${a}) === ${zero(e.arg.type.width)} ? 1 : 0)`;
      const raw = e.op === 'neg' ? `-(${a})` : `~(${a})`;
      return big(w) ? `BigInt.asUintN(${w}, ${raw})` : wrapSmall(raw, w);
    }
    case 'binary': {
      const a = g(e.left);
      const b = g(e.right);
      const ow = e.left.type.width;
      switch (e.op) {
        case 'add':
        case 'sub': {
          const raw = `(${a}) ${e.op === 'add' ? '+' : '-'} (${b})`;
          return big(w) ? `BigInt.asUintN(${w}, ${raw})` : wrapSmall(raw, w);
        }
        case 'and':
        case 'or':
        case 'xor': {
          const raw = `(${a}) ${e.op === 'and' ? '&' : e.op === 'or' ? '|' : '^'} (${b})`;
          return big(w) || w < 32 ? `(${raw})` : `((${raw}) >>> 0)`;
        }
        case 'land':
        case 'lor':
          return `(((${a}) !== ${zero(e.left.type.width)}) ${e.op === 'land' ? '&&' : '||'} ((${b}) !== ${zero(e.right.type.width)}) ? 1 : 0)`;
        case 'eq':
          return `((${a}) === (${b}) ? 1 : 0)`;
        case 'ne':
          return `((${a}) !== (${b}) ? 1 : 0)`;
        default: {
          const op = { lt: '<', le: '<=', gt: '>', ge: '>=' }[e.op];
          if (!e.left.type.signed) return `((${a}) ${op} (${b}) ? 1 : 0)`;
          const sa = big(ow) ? `BigInt.asIntN(${ow}, ${a})` : signedSmall(a, ow);
          const sb = big(ow) ? `BigInt.asIntN(${ow}, ${b})` : signedSmall(b, ow);
          return `(${sa} ${op} ${sb} ? 1 : 0)`;
        }
      }
    }
    case 'shift': {
      const a = g(e.arg);
      const k = e.amount;
      if (e.dir === 'left') {
        if (k >= w) return zero(w);
        return big(w) ? `BigInt.asUintN(${w}, (${a}) << ${k}n)` : wrapSmall(`(${a}) << ${k}`, w);
      }
      if (!e.arg.type.signed) {
        if (k >= w) return zero(w);
        return big(w) ? `((${a}) >> ${k}n)` : `((${a}) >>> ${k})`;
      }
      if (big(w)) return `BigInt.asUintN(${w}, BigInt.asIntN(${w}, ${a}) >> ${Math.min(k, w - 1)}n)`;
      return wrapSmall(`${signedSmall(a, w)} >> ${Math.min(k, 31)}`, w);
    }
    case 'slice': {
      const a = g(e.arg);
      const aw = e.arg.type.width;
      if (!big(aw)) return e.lsb === 0 && w === 32 ? a : `(((${a}) >>> ${e.lsb}) & ${mask(w)})`;
      const sliced = `(((${a}) >> ${e.lsb}n) & ${(1n << BigInt(w)) - 1n}n)`;
      return big(w) ? sliced : `Number${sliced}`;
    }
    case 'concat': {
      let shift = w;
      const terms: string[] = [];
      for (const p of e.parts) {
        shift -= p.type.width;
        const v = g(p);
        if (big(w)) terms.push(`(${big(p.type.width) ? v : `BigInt(${v})`} << ${shift}n)`);
        else terms.push(shift === 0 ? `(${v})` : `((${v}) << ${shift})`);
      }
      return big(w) ? `(${terms.join(' | ')})` : `((${terms.join(' | ')}) >>> 0)`;
    }
    case 'resize': {
      const a = g(e.arg);
      const aw = e.arg.type.width;
      const signed = e.arg.type.signed && w > aw;
      if (!big(w)) return signed ? wrapSmall(signedSmall(a, aw), w) : a;
      if (!big(aw)) return signed ? `BigInt.asUintN(${w}, BigInt(${signedSmall(a, aw)}))` : `BigInt(${a})`;
      return signed ? `BigInt.asUintN(${w}, BigInt.asIntN(${aw}, ${a}))` : a;
    }
  }
}

/** Generates the source of the step function for a machine. */
export function compiledSource(m: Machine): string {
  const ii = new Map(m.inputs.map((x, i) => [x.name, i]));
  const ri = new Map(m.registers.map((x, i) => [x.name, i]));
  const oi = new Map(m.outputs.map((x, i) => [x.name, i]));
  const names = { input: (n: string) => `i${ii.get(n)}`, reg: (n: string) => `r${ri.get(n)}` };
  const lit = (bits: string, w: number) => (big(w) ? `${bits}n` : bits);
  const L: string[] = [];
  L.push(`let st = ${m.resetState};`);
  m.registers.forEach((r, i) => L.push(`let r${i} = ${lit(r.resetBits, r.type.width)};`));
  L.push('function reset() {');
  L.push(`  st = ${m.resetState};`);
  m.registers.forEach((r, i) => L.push(`  r${i} = ${lit(r.resetBits, r.type.width)};`));
  L.push('}');
  L.push('function step(inp, out) {');
  m.inputs.forEach((_, i) => L.push(`  const i${i} = inp[${i}];`));
  m.registers.forEach((_, i) => L.push(`  let n${i} = r${i};`));
  m.outputs.forEach((o, i) => L.push(`  let o${i} = ${lit(o.defaultBits, o.type.width)};`));
  L.push('  let fired = -1, ns = st;');
  L.push('  switch (st) {');
  m.states.forEach((s, si) => {
    L.push(`    case ${si}: { // ${s.name}`);
    for (const o of s.outputs) L.push(`      o${oi.get(o.output)} = ${compileExpr(o.value, names)};`);
    for (const t of s.transfers) L.push(`      n${ri.get(t.register)} = ${compileExpr(t.value, names)};`);
    s.transitions.forEach((t, k) => {
      const cond = t.condition ? compileExpr(t.condition, names) : 'true';
      L.push(`      ${k === 0 ? 'if' : 'else if'} (${cond}) {`);
      L.push(`        fired = ${k}; ns = ${t.target};`);
      for (const o of t.outputs) L.push(`        o${oi.get(o.output)} = ${compileExpr(o.value, names)};`);
      for (const x of t.transfers) L.push(`        n${ri.get(x.register)} = ${compileExpr(x.value, names)};`);
      L.push('      }');
    });
    L.push('      break;');
    L.push('    }');
  });
  L.push('  }');
  m.outputs.forEach((_, i) => L.push(`  out[${i}] = o${i};`));
  L.push('  st = ns;');
  m.registers.forEach((_, i) => L.push(`  r${i} = n${i};`));
  L.push('  return fired;');
  L.push('}');
  L.push(`function regs() { return [${m.registers.map((_, i) => `r${i}`).join(', ')}]; }`);
  L.push('function load(s, rv) {');
  L.push('  st = s;');
  m.registers.forEach((_, i) => L.push(`  r${i} = rv[${i}];`));
  L.push('}');
  L.push('return { reset, step, state: () => st, regs, load };');
  return L.join('\n');
}

export function compileModel(m: Machine): CompiledModel {
  const source = compiledSource(m);
  // The source is generated from the checked IR only (names never reach it: signals are numbered).
  const factory = new Function(source) as () => Omit<CompiledModel, 'source'>;
  return { ...factory(), source };
}
