// Random well-typed machines for property tests: every node is built at the type the IR rules
// require, so the result is a valid checked IR without going through the parser.
import type { BitType, Expr, Machine } from '../../core/ir/schema';
import { MachineSchema } from '../../core/ir/schema';
import { SeededRandom } from '../../core/util/prng';

const WIDTHS = [1, 2, 3, 5, 8, 12, 16, 31, 32, 33, 40, 48, 63, 64];

interface Sig {
  kind: 'input' | 'reg';
  name: string;
  type: BitType;
}

export class RandomMachineBuilder {
  constructor(private rnd: SeededRandom, private signals: Sig[]) {}

  private pick<T>(xs: readonly T[]): T {
    return xs[this.rnd.below(xs.length)];
  }

  private constant(type: BitType): Expr {
    const r = this.rnd.below(4);
    const bits = r === 0 ? 0n : r === 1 ? (1n << BigInt(type.width)) - 1n : r === 2 ? 1n : this.rnd.bits(type.width);
    return { kind: 'const', type, bits: bits.toString() };
  }

  /** An expression of exactly `type`. */
  expr(type: BitType, depth: number): Expr {
    if (depth <= 0 || this.rnd.below(5) === 0) return this.leaf(type);
    const w = type.width;
    switch (this.rnd.below(9)) {
      case 0:
      case 1:
        return { kind: 'binary', op: this.pick(['add', 'sub', 'and', 'or', 'xor'] as const), type, left: this.expr(type, depth - 1), right: this.expr(type, depth - 1) };
      case 2:
        return { kind: 'unary', op: this.pick(['neg', 'not'] as const), type, arg: this.expr(type, depth - 1) };
      case 3:
        return { kind: 'shift', dir: this.pick(['left', 'right'] as const), amount: this.rnd.below(w + 3), type, arg: this.expr(type, depth - 1) };
      case 4:
        return this.asType(this.boolean(depth - 1), type);
      case 5: {
        const srcW = Math.min(64, w + this.rnd.below(64 - w + 1));
        const lsb = this.rnd.below(srcW - w + 1);
        const src = this.expr({ width: srcW, signed: this.rnd.below(2) === 1 }, depth - 1);
        return this.asType({ kind: 'slice', msb: lsb + w - 1, lsb, type: { width: w, signed: false }, arg: src }, type);
      }
      case 6: {
        if (w < 2) return this.leaf(type);
        const cut = 1 + this.rnd.below(w - 1);
        const hi = this.expr({ width: w - cut, signed: this.rnd.below(2) === 1 }, depth - 1);
        const lo = this.expr({ width: cut, signed: this.rnd.below(2) === 1 }, depth - 1);
        return this.asType({ kind: 'concat', parts: [hi, lo], type: { width: w, signed: false } }, type);
      }
      case 7: {
        const from = 1 + this.rnd.below(w);
        return { kind: 'resize', type, arg: this.expr({ width: from, signed: this.rnd.below(2) === 1 }, depth - 1) };
      }
      default:
        return this.leaf(type);
    }
  }

  /** A 1-bit unsigned expression: comparisons and logic. */
  boolean(depth: number): Expr {
    const t1 = { width: 1, signed: false };
    if (depth <= 0) return this.leaf(t1);
    switch (this.rnd.below(4)) {
      case 0: {
        const ot = { width: this.pick(WIDTHS), signed: this.rnd.below(2) === 1 };
        return { kind: 'binary', op: this.pick(['eq', 'ne', 'lt', 'le', 'gt', 'ge'] as const), type: t1, left: this.expr(ot, depth - 1), right: this.expr(ot, depth - 1) };
      }
      case 1: {
        const a = this.expr({ width: this.pick(WIDTHS), signed: false }, depth - 1);
        const b = this.expr({ width: this.pick(WIDTHS), signed: true }, depth - 1);
        return { kind: 'binary', op: this.pick(['land', 'lor'] as const), type: t1, left: a, right: b };
      }
      case 2:
        return { kind: 'unary', op: 'lnot', type: t1, arg: this.expr({ width: this.pick(WIDTHS), signed: false }, depth - 1) };
      default:
        return this.expr(t1, depth - 1);
    }
  }

  private asType(e: Expr, type: BitType): Expr {
    if (e.type.width === type.width && e.type.signed === type.signed) return e;
    return { kind: 'resize', type, arg: e };
  }

  private leaf(type: BitType): Expr {
    if (this.rnd.below(3) === 0 || this.signals.length === 0) return this.constant(type);
    const s = this.pick(this.signals);
    const base: Expr = { kind: s.kind, name: s.name, type: s.type } as Expr;
    if (s.type.width > type.width) {
      const lsb = this.rnd.below(s.type.width - type.width + 1);
      return this.asType({ kind: 'slice', msb: lsb + type.width - 1, lsb, type: { width: type.width, signed: false }, arg: base }, type);
    }
    return this.asType(base, type);
  }
}

export function randomMachine(seed: number, opts: { maxStates?: number; depth?: number } = {}): Machine {
  const rnd = new SeededRandom(seed);
  const loc = { line: 1, col: 1 };
  const nIn = 1 + rnd.below(4);
  const nReg = 1 + rnd.below(4);
  const nOut = rnd.below(4);
  const ty = (): BitType => ({ width: WIDTHS[rnd.below(WIDTHS.length)], signed: rnd.below(3) === 0 });
  const inputs = Array.from({ length: nIn }, (_, i) => ({ name: `in${i}`, type: rnd.below(2) ? { width: 1, signed: false } : ty(), synchronize: false, loc }));
  const registers = Array.from({ length: nReg }, (_, i) => {
    const type = ty();
    return { name: `r${i}`, type, resetBits: rnd.bits(type.width).toString(), loc };
  });
  const outputs = Array.from({ length: nOut }, (_, i) => {
    const type = ty();
    return { name: `o${i}`, type, defaultBits: rnd.bits(type.width).toString(), loc };
  });
  const signals: Sig[] = [...inputs.map((x) => ({ kind: 'input' as const, name: x.name, type: x.type })), ...registers.map((x) => ({ kind: 'reg' as const, name: x.name, type: x.type }))];
  const b = new RandomMachineBuilder(rnd, signals);
  const depth = opts.depth ?? 3;
  const nStates = 1 + rnd.below(opts.maxStates ?? 5);
  const subset = <T>(xs: T[]) => xs.filter(() => rnd.below(2) === 0);
  const states = Array.from({ length: nStates }, (_, si) => {
    const transfers = subset(registers).map((r) => ({ register: r.name, value: b.expr(r.type, depth), loc }));
    const outs = subset(outputs).map((o) => ({ output: o.name, value: b.expr(o.type, depth), loc }));
    const transitions = Array.from({ length: rnd.below(4) }, () => {
      const trTransfers = subset(registers.filter((r) => !transfers.some((t) => t.register === r.name))).map((r) => ({ register: r.name, value: b.expr(r.type, depth), loc }));
      const trOuts = subset(outputs.filter((o) => !outs.some((t) => t.output === o.name))).map((o) => ({ output: o.name, value: b.expr(o.type, depth), loc }));
      return { target: rnd.below(nStates), condition: rnd.below(6) === 0 ? null : b.boolean(depth), transfers: trTransfers, outputs: trOuts, loc };
    });
    return { name: `S${si}`, code: null, transfers, outputs: outs, transitions, loc };
  });
  return MachineSchema.parse({ irVersion: 1, name: `random_${seed}`, clockHz: null, inputs, outputs, registers, constants: [], states, resetState: rnd.below(nStates), file: 'random' });
}
