// Accounts for one divergence in terms of the synthesized hardware: the next-state equation of a wrong
// state bit, a register's load enable, select and sources, or a status signal's comparator, each
// evaluated on the board's own values so the text says which part did not do what it should.
import { evalExpr } from '../ir/eval';
import type { Machine } from '../ir/schema';
import type { Equation, RegisterPath, Synthesis } from '../synth/schema';
import { formatValue } from '../util/bits';
import type { ProbeMap } from './probe-map';
import type { Expectation, ReferenceModel } from './reference';

export interface ExplainContext {
  m: Machine;
  syn: Synthesis;
  map: ProbeMap;
  ref: ReferenceModel;
  /** Field values of the previous frame (basis of the prediction), or null. */
  prev: bigint[] | null;
  /** True when the prediction is the reset state rather than a previous frame. */
  afterReset: boolean;
  cur: bigint[];
  exp: Expectation;
}

/** Per-design lookups the explanations need, built once. */
export class Explainer {
  private readonly equations = new Map<string, Equation>();
  private readonly regPaths = new Map<string, RegisterPath>();

  constructor(
    private readonly m: Machine,
    private readonly syn: Synthesis,
    private readonly map: ProbeMap,
  ) {
    for (const e of syn.equations) this.equations.set(e.target, e);
    for (const r of syn.datapath.registers) this.regPaths.set(r.register, r);
  }

  /** Values of the equation variables (state bits, then controller inputs) as the board had them. */
  private boardVariables(values: bigint[], statusFrom: 'board' | 'model', ctx: ExplainContext): number[] {
    const { syn, map, m } = this;
    const code = Number(values[map.state]);
    const w = syn.encoding.width;
    const bits = syn.encoding.bits.map((_, k) => (code >>> (w - 1 - k)) & 1);
    const env = ctx.ref.env(values);
    const ctl = syn.controller.inputs.map((ci) => {
      if (ci.from === 'input') {
        const k = m.inputs.findIndex((x) => x.name === ci.name);
        return k >= 0 ? Number(values[map.inputs[k]] & 1n) : 0;
      }
      const s = map.statuses.find((x) => x.signal.name === ci.name);
      if (!s) return 0;
      return statusFrom === 'board' ? Number(values[s.field] & 1n) : Number(evalExpr(s.signal.expr, env));
    });
    return [...bits, ...ctl];
  }

  /** Controller inputs (status signals) the board saw differently from the model, as text. */
  private statusDisagreements(values: bigint[], ctx: ExplainContext): string[] {
    const env = ctx.ref.env(values);
    return this.map.statuses
      .filter((s) => evalExpr(s.signal.expr, env) !== values[s.field])
      .map((s) => `${s.signal.name} = ${values[s.field]} on the board where ${s.signal.text} gives ${evalExpr(s.signal.expr, env)}`);
  }

  private evalEquation(name: string, vars: number[]): number | null {
    const eq = this.equations.get(name);
    if (!eq) return null;
    return coverValue(eq.cover, vars);
  }

  stateName(index: number, code?: bigint): string {
    if (index >= 0) return this.m.states[index].name;
    return `code ${code === undefined ? '?' : code.toString(2).padStart(this.syn.encoding.width, '0')} (no state)`;
  }

  explainState(ctx: ExplainContext): string {
    const { exp, cur } = ctx;
    const w = this.syn.encoding.width;
    const boardCode = cur[this.map.state];
    const boardBits = boardCode.toString(2).padStart(w, '0');
    if (ctx.afterReset) {
      const want = this.syn.encoding.resetCode;
      return `after reset the state register should hold ${this.m.states[this.m.resetState].name} (code ${want}); it holds ${boardBits}: the reset did not reach the state flip-flops, or was released early or with the wrong polarity`;
    }
    if (exp.expectedState < 0 || !ctx.prev) {
      return `state code ${boardBits} is no state's code in the ${this.syn.encoding.kind} encoding: the state flip-flops reached an unused code`;
    }
    const wantBits = this.syn.encoding.codes[exp.expectedState];
    const vars = this.boardVariables(ctx.prev, 'board', ctx);
    const disagreements = this.statusDisagreements(ctx.prev, ctx);
    const parts: string[] = [];
    for (let k = 0; k < w; k++) {
      if (wantBits[k] === boardBits[k]) continue;
      const bit = this.syn.encoding.bits[k];
      const eq = this.equations.get(`${bit}'`);
      let text = `next-state bit ${bit} expected ${wantBits[k]}, board ${boardBits[k]}`;
      if (eq) {
        const got = coverValue(eq.cover, vars);
        text += `; ${eq.text}`;
        if (String(got) === boardBits[k]) {
          text += disagreements.length
            ? `, which on the board's own controller inputs gives ${got}, as the board did: the controller saw ${disagreements.join('; ')}`
            : `, which on the board's own state bits and controller inputs gives ${got}, as the board did: the equation and the model disagree here (a stale bitstream?)`;
        } else {
          text += `, which on the board's own state bits and controller inputs of the previous cycle gives ${got}: the logic or flip-flop of ${bit} did not follow its equation`;
        }
      }
      parts.push(text);
    }
    if (boardCode >= 0n && exp.boardState < 0) parts.push(`code ${boardBits} is no state's code`);
    return parts.join('; ') || `state code ${boardBits} differs from ${wantBits}`;
  }

  explainRegister(ctx: ExplainContext, reg: number): string {
    const r = this.m.registers[reg];
    const field = this.map.registers[reg];
    const act = ctx.cur[field];
    const want = ctx.exp.expected[field]!;
    const fmt = (v: bigint) => formatValue(v, r.type.width, r.type.signed);
    const diff = bitList(want ^ act);
    const diffText = diff.length === 1 ? `only bit ${diff[0]} differs` : `bits ${diff.join(', ')} differ`;
    if (ctx.afterReset) return `after reset ${r.name} should hold its reset value ${fmt(want)}; ${diffText}: the reset did not reach this register, or was released early`;
    if (!ctx.prev) return `${r.name} is ${fmt(act)}, expected ${fmt(want)}`;
    const path = this.regPaths.get(r.name);
    const old = ctx.prev[field];
    const loads = this.modelLoads(ctx, r.name);
    const vars = this.boardVariables(ctx.prev, 'board', ctx);
    const disagreements = this.statusDisagreements(ctx.prev, ctx);
    const seen = disagreements.length ? ` (the controller saw ${disagreements.join('; ')})` : '';
    if (!path || path.loadEnable === null) return `${r.name} has no load enable (nothing ever loads it), yet it changed from ${fmt(old)} to ${fmt(act)}; ${diffText}: its flip-flops or their reset`;
    const env = ctx.ref.env(ctx.prev);
    const sourceValues = path.sources.map((s) => evalExpr(s.expr, env));
    const ld = path.loadEnable;
    const ldText = this.equations.get(ld)?.text ?? ld;
    const ldBoard = this.evalEquation(ld, vars);
    const matching = sourceValues.map((v, i) => (v === act ? i : -1)).filter((i) => i >= 0);
    const src = (i: number) => `source ${i} (${path.sources[i].text} = ${fmt(sourceValues[i])})`;
    if (!loads && act !== old) {
      return `${r.name} changed to ${fmt(act)} (was ${fmt(old)}, ${diffText}) though its load enable ${ld} should be 0 in state ${this.stateName(ctx.exp.fromState)}; ${ldText} gives ${ldBoard} on the board's own values${seen}${matching.length ? `; the new value is ${src(matching[0])}` : ''}`;
    }
    if (loads && act === old && want !== old) {
      return `${r.name} kept ${fmt(old)} though it should have loaded ${fmt(want)}: its load enable ${ld} should be 1 (${ldText} gives ${ldBoard} on the board's own values)${seen}`;
    }
    const selectText = path.select.length ? path.select.map((s) => this.equations.get(s)?.text ?? s).join('; ') : '';
    const wanted = sourceValues.findIndex((v) => v === want);
    if (matching.length && wanted >= 0 && !matching.includes(wanted)) {
      return `${r.name} took ${src(matching[0])} instead of ${src(wanted)}: the multiplexer select${path.select.length > 1 ? 's' : ''} ${path.select.join(', ')}${selectText ? ` (${selectText})` : ''} picked the wrong input${seen}`;
    }
    const unit = wanted >= 0 ? path.sources[wanted].from : null;
    const via = unit && !['register', 'input', 'constant', 'wiring'].includes(unit) ? `the ${unit} result, ` : '';
    return `${r.name} is ${fmt(act)}, expected ${fmt(want)}${wanted >= 0 ? ` (${src(wanted)})` : ''}; ${diffText}, and no source of the register gives the board's value: ${via}the multiplexer or the register's flip-flops`;
  }

  explainStatus(ctx: ExplainContext, k: number): string {
    const s = this.map.statuses[k].signal;
    const refs = referencedNames(s.expr).filter((n, i, all) => all.findIndex((x) => x.name === n.name && x.kind === n.kind) === i);
    const env = ctx.ref.env(ctx.cur);
    const shown = refs
      .map((n) => {
        const reg = this.m.registers.find((x) => x.name === n.name);
        const inp = this.m.inputs.find((x) => x.name === n.name);
        const t = reg?.type ?? inp?.type;
        const v = n.kind === 'reg' ? env.reg(n.name) : env.input(n.name);
        return `${n.name} = ${t ? formatValue(v, t.width, t.signed) : v}`;
      })
      .join(', ');
    const what = s.kind === 'comparator' ? 'its comparator' : s.kind === 'bit tap' ? 'its bit tap' : 'its logic';
    return `status ${s.name} disagrees with ${what}${s.unit ? ` (${s.unit})` : ''} on the board's own values: ${s.text} with ${shown || 'constants only'} gives ${ctx.exp.expected[this.map.statuses[k].field]}, the board reports ${ctx.cur[this.map.statuses[k].field]}`;
  }

  explainOutput(ctx: ExplainContext, k: number): string {
    const o = this.m.outputs[this.map.outputs[k].output];
    const want = ctx.exp.expected[this.map.outputs[k].field];
    const eq = this.syn.controller.outputs.find((c) => c.role === 'output' && c.drives === o.name);
    if (eq) {
      const e = this.equations.get(eq.name);
      const got = e ? coverValue(e.cover, this.boardVariables(ctx.cur, 'board', ctx)) : null;
      const agree = got !== null && BigInt(got) === ctx.cur[this.map.outputs[k].field];
      return `output ${o.name} should be ${want} in state ${this.stateName(ctx.exp.boardState)}${e ? `; ${e.text} gives ${got} on the board's own state bits and controller inputs` : ''}${agree ? ', as the board shows: a controller input differs from the model (see the status divergences) or the bitstream is stale' : ': the output logic or its probe connection'}`;
    }
    const data = this.syn.datapath.outputs.find((d) => d.output === o.name);
    const sources = data ? `; it is driven by the datapath from ${data.sources.map((s) => s.text).join(' | ')}${data.select.length ? ` selected by ${data.select.join(', ')}` : ''}` : '';
    return `output ${o.name} should be ${want} in state ${this.stateName(ctx.exp.boardState)}${sources}`;
  }

  /** Does the model's step write the register (state transfer or the firing transition's)? */
  private modelLoads(ctx: ExplainContext, reg: string): boolean {
    if (ctx.exp.fromState < 0) return false;
    const st = this.m.states[ctx.exp.fromState];
    if (st.transfers.some((t) => t.register === reg)) return true;
    const fired = ctx.exp.expectedFired;
    return fired >= 0 && st.transitions[fired].transfers.some((t) => t.register === reg);
  }
}

/** Value of a sum of products at one point; cubes are over the variables in order, variable 0 leftmost. */
export function coverValue(cover: readonly string[], vars: readonly number[]): number {
  outer: for (const cube of cover) {
    for (let i = 0; i < cube.length; i++) {
      const c = cube.charCodeAt(i);
      if (c === 45 /* - */) continue;
      if (c - 48 !== vars[i]) continue outer;
    }
    return 1;
  }
  return 0;
}

/** Positions of the set bits, least significant first. */
export function bitList(v: bigint): number[] {
  const out: number[] = [];
  for (let k = 0; v > 0n; k++, v >>= 1n) if (v & 1n) out.push(k);
  return out;
}

function referencedNames(e: import('../ir/schema').Expr): { kind: 'reg' | 'input'; name: string }[] {
  switch (e.kind) {
    case 'input':
    case 'reg':
      return [{ kind: e.kind, name: e.name }];
    case 'const':
      return [];
    case 'unary':
    case 'shift':
    case 'slice':
    case 'resize':
      return referencedNames(e.arg);
    case 'binary':
      return [...referencedNames(e.left), ...referencedNames(e.right)];
    case 'concat':
      return e.parts.flatMap(referencedNames);
  }
}
