// Reduced ordered binary decision diagrams (Bryant, IEEE Trans. Computers C-35, 1986) over the
// controller inputs: exact Boolean algebra on conditions and disjoint cube lists for table rows.

/** Node handle: 0 is constant false, 1 constant true, others index the node table. */
export type BddRef = number;

export interface Bdd {
  readonly vars: number;
  variable(i: number): BddRef;
  not(a: BddRef): BddRef;
  and(a: BddRef, b: BddRef): BddRef;
  or(a: BddRef, b: BddRef): BddRef;
  xor(a: BddRef, b: BddRef): BddRef;
  /** Disjoint cubes (one per path to true), '-' for variables not tested on the path. */
  cubes(f: BddRef): string[];
  /** Value at a full assignment (one 0/1 per variable). */
  evaluate(f: BddRef, bits: readonly number[]): boolean;
  /** Variables the function depends on, ascending. */
  support(f: BddRef): number[];
}

export const FALSE: BddRef = 0;
export const TRUE: BddRef = 1;

/** A fresh diagram manager over `vars` variables in the order 0, 1, ... (0 tested first). */
export function makeBdd(vars: number): Bdd {
  // Terminals sit at level `vars` so every inner node's level is smaller than its children's.
  const level: number[] = [vars, vars];
  const low: number[] = [0, 1];
  const high: number[] = [0, 1];
  const unique = new Map<string, BddRef>();
  const memo = new Map<string, BddRef>();

  function node(v: number, lo: BddRef, hi: BddRef): BddRef {
    if (lo === hi) return lo;
    const key = `${v},${lo},${hi}`;
    const found = unique.get(key);
    if (found !== undefined) return found;
    const id = level.length;
    level.push(v);
    low.push(lo);
    high.push(hi);
    unique.set(key, id);
    return id;
  }

  type Op = 'and' | 'or' | 'xor';
  function terminalCase(op: Op, a: BddRef, b: BddRef): BddRef | null {
    if (op === 'and') {
      if (a === FALSE || b === FALSE) return FALSE;
      if (a === TRUE) return b;
      if (b === TRUE || a === b) return a;
    } else if (op === 'or') {
      if (a === TRUE || b === TRUE) return TRUE;
      if (a === FALSE) return b;
      if (b === FALSE || a === b) return a;
    } else {
      if (a === FALSE) return b;
      if (b === FALSE) return a;
      if (a === b) return FALSE;
      if (a === TRUE && b === TRUE) return FALSE;
    }
    return null;
  }

  function apply(op: Op, a: BddRef, b: BddRef): BddRef {
    const t = terminalCase(op, a, b);
    if (t !== null) return t;
    const key = a < b ? `${op}${a},${b}` : `${op}${b},${a}`; // all three operators commute
    const hit = memo.get(key);
    if (hit !== undefined) return hit;
    const v = Math.min(level[a], level[b]);
    const a0 = level[a] === v ? low[a] : a;
    const a1 = level[a] === v ? high[a] : a;
    const b0 = level[b] === v ? low[b] : b;
    const b1 = level[b] === v ? high[b] : b;
    const r = node(v, apply(op, a0, b0), apply(op, a1, b1));
    memo.set(key, r);
    return r;
  }

  return {
    vars,
    variable(i) {
      if (!Number.isInteger(i) || i < 0 || i >= vars) throw new RangeError(`variable ${i} outside 0..${vars - 1}`);
      return node(i, FALSE, TRUE);
    },
    not: (a) => apply('xor', a, TRUE),
    and: (a, b) => apply('and', a, b),
    or: (a, b) => apply('or', a, b),
    xor: (a, b) => apply('xor', a, b),
    cubes(f) {
      const out: string[] = [];
      const path: string[] = new Array<string>(vars).fill('-');
      const walk = (n: BddRef): void => {
        if (n === FALSE) return;
        if (n === TRUE) {
          out.push(path.join(''));
          return;
        }
        const v = level[n];
        path[v] = '0';
        walk(low[n]);
        path[v] = '1';
        walk(high[n]);
        path[v] = '-';
      };
      walk(f);
      return out;
    },
    evaluate(f, bits) {
      let n = f;
      while (n > TRUE) n = bits[level[n]] ? high[n] : low[n];
      return n === TRUE;
    },
    support(f) {
      const seen = new Set<number>();
      const vs = new Set<number>();
      const walk = (n: BddRef): void => {
        if (n <= TRUE || seen.has(n)) return;
        seen.add(n);
        vs.add(level[n]);
        walk(low[n]);
        walk(high[n]);
      };
      walk(f);
      return [...vs].sort((x, y) => x - y);
    },
  };
}
