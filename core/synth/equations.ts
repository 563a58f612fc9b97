// Controller equations: every next-state bit and every controller output as a single-output function
// of (state bits + controller inputs) with don't-cares, minimized to a sum of products.
import { coverCost, minimize } from './minimize';
import type { ControllerInput, ControllerOutput, Cost, Encoding, Equation, TableRow } from './schema';

/** A single-output function over the equation variables, ready for the minimizer. */
export interface ControllerFunction {
  target: string;
  kind: Equation['kind'];
  inputs: number;
  on: string[];
  dc: string[];
}

export function equationVariables(encoding: Encoding, inputs: readonly ControllerInput[]): string[] {
  return [...encoding.bits, ...inputs.map((i) => i.name)];
}

/** Next-state bit b is 1 on the rows whose next state's code has a 1 there; unused codes are don't-cares. */
export function controllerFunctions(table: readonly TableRow[], encoding: Encoding, inputs: number, outputs: readonly ControllerOutput[]): ControllerFunction[] {
  const n = encoding.width + inputs;
  const unused = encoding.unusedCodes.map((c) => c + '-'.repeat(inputs));
  const fns: ControllerFunction[] = [];
  encoding.bits.forEach((bit, b) => {
    const on = table.filter((r) => encoding.codes[r.next][b] === '1').map((r) => encoding.codes[r.state] + r.cube);
    fns.push({ target: `${bit}'`, kind: 'next-state', inputs: n, on, dc: [...unused] });
  });
  outputs.forEach((o, k) => {
    const on = table.filter((r) => r.outputs[k] === '1').map((r) => encoding.codes[r.state] + r.cube);
    const dc = table.filter((r) => r.outputs[k] === '-').map((r) => encoding.codes[r.state] + r.cube);
    fns.push({ target: o.name, kind: 'output', inputs: n, on, dc: [...unused, ...dc] });
  });
  return fns;
}

/** Minimizer call that also accepts functions of no variables. */
function minimizeCover(inputs: number, on: string[], dc: string[], exactLimit: number | undefined): { cover: string[]; method: 'exact' | 'heuristic'; cost: Cost } {
  if (inputs === 0) {
    const cover = on.length > 0 ? [''] : [];
    return { cover, method: 'exact', cost: coverCost(cover) };
  }
  const r = minimize({ inputs, on, dc }, exactLimit === undefined ? {} : { exactLimit });
  return { cover: r.cover, method: r.method, cost: r.cost };
}

export function minimizeFunctions(fns: readonly ControllerFunction[], variables: readonly string[], exactLimit?: number): Equation[] {
  return fns.map((f) => {
    const r = minimizeCover(f.inputs, f.on, f.dc, exactLimit);
    return { target: f.target, kind: f.kind, cover: r.cover, method: r.method, cost: r.cost, text: equationText(f.target, r.cover, variables) };
  });
}

/**
 * The one-hot form: each state flip-flop is set by the OR, over the transitions into its state, of
 * the source flip-flop AND the transition's input cube; outputs likewise per state. It is correct
 * on one-hot codes only, which is all the state register ever holds after reset. Per source state,
 * the input part is minimized over the controller inputs alone.
 */
export function oneHotForm(table: readonly TableRow[], encoding: Encoding, inputs: number, outputs: readonly ControllerOutput[], variables: readonly string[], exactLimit?: number): Equation[] {
  const states = encoding.width;
  const term = (state: number, cube: string): string => '-'.repeat(state) + '1' + '-'.repeat(states - state - 1) + cube;
  const rowsOf: TableRow[][] = Array.from({ length: states }, () => []);
  for (const r of table) rowsOf[r.state].push(r);
  const build = (target: string, kind: Equation['kind'], onRow: (r: TableRow) => boolean, dcRow: (r: TableRow) => boolean): Equation => {
    const cover: string[] = [];
    for (let s = 0; s < states; s++) {
      const rows = rowsOf[s];
      const on = rows.filter(onRow).map((r) => r.cube);
      if (on.length === 0) continue;
      const dc = rows.filter(dcRow).map((r) => r.cube);
      for (const c of minimizeCover(inputs, on, dc, exactLimit).cover) cover.push(term(s, c));
    }
    return { target, kind, cover, method: 'one-hot form', cost: coverCost(cover), text: equationText(target, cover, variables) };
  };
  const eqs = encoding.bits.map((bit, s) => build(`${bit}'`, 'next-state', (r) => r.next === s, () => false));
  outputs.forEach((o, k) => eqs.push(build(o.name, 'output', (r) => r.outputs[k] === '1', (r) => r.outputs[k] === '-')));
  return eqs;
}

export function totalCost(eqs: readonly Equation[]): Cost {
  return eqs.reduce((a, e) => ({ products: a.products + e.cost.products, literals: a.literals + e.cost.literals, gates2: a.gates2 + e.cost.gates2 }), { products: 0, literals: 0, gates2: 0 });
}

/**
 * Readable sum of products: `q1' = /q1·q0·go_btn + q1·/pulse`. Literals are joined by `·` (AND),
 * products by ` + ` (OR), `/x` is the complement of x, `'` marks a next-state value; the empty
 * sum is `0` and the empty product `1`.
 */
export function equationText(target: string, cover: readonly string[], variables: readonly string[]): string {
  return `${target} = ${coverText(cover, variables)}`;
}

export function coverText(cover: readonly string[], variables: readonly string[]): string {
  if (cover.length === 0) return '0';
  return cover
    .map((cube) => {
      const lits: string[] = [];
      for (let i = 0; i < cube.length; i++) {
        if (cube[i] === '1') lits.push(variables[i]);
        else if (cube[i] === '0') lits.push(`/${variables[i]}`);
      }
      return lits.length === 0 ? '1' : lits.join('·');
    })
    .join(' + ');
}
