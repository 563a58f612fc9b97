// Minimum-cost unate covering (the prime implicant table): essential columns, row and column
// dominance, then branch and bound with an independent-row lower bound, under a work budget.

/**
 * A covering matrix: every row must be covered by at least one chosen column. `rowCols[r]` lists
 * the columns covering row r, `colRows[c]` the rows column c covers, `cost[c]` its positive cost.
 */
export interface CoverMatrix {
  rowCols: readonly (readonly number[])[];
  colRows: readonly (readonly number[])[];
  cost: readonly number[];
}

export type CoverResult =
  /** Chosen columns of a minimum-cost cover. */
  | { kind: 'optimal'; cols: number[]; cost: number; nodes: number }
  /** No cover is cheaper than the given upper bound, so a cover of that cost is optimal. */
  | { kind: 'bound-optimal'; nodes: number }
  /** A row no column covers. */
  | { kind: 'infeasible' }
  /** The work budget ran out first. */
  | { kind: 'budget' };

/** Search state: which rows still need covering, which columns may still be chosen. */
interface Node {
  rowOn: Uint8Array;
  colOn: Uint8Array;
  chosen: number[];
  cost: number;
}

class BudgetExceeded extends Error {}

/**
 * Solve the covering problem exactly, looking only for covers cheaper than `upperBound` (pass
 * Infinity when no cover is known). `maxWork` bounds the matrix entries visited in total, which
 * keeps the time of a hopeless search bounded (roughly proportional to it).
 */
export function solveCover(m: CoverMatrix, maxWork: number, upperBound = Infinity): CoverResult {
  const nRows = m.rowCols.length;
  const nCols = m.colRows.length;
  for (let r = 0; r < nRows; r++) if (m.rowCols[r].length === 0) return { kind: 'infeasible' };
  const stamp = new Int32Array(Math.max(nRows, nCols));
  let stampNow = 0;
  let nodes = 0;
  let work = 0;
  let best: { cols: number[]; cost: number } | null = null;
  let bound = upperBound;

  const activeCols = (n: Node, r: number): number[] => {
    const all = m.rowCols[r];
    work += all.length;
    if (work > maxWork) throw new BudgetExceeded();
    const out: number[] = [];
    for (const c of all) if (n.colOn[c] === 1) out.push(c);
    return out;
  };
  const activeRows = (n: Node, c: number): number[] => {
    const all = m.colRows[c];
    work += all.length;
    const out: number[] = [];
    for (const r of all) if (n.rowOn[r] === 1) out.push(r);
    return out;
  };

  const select = (n: Node, c: number): void => {
    n.chosen.push(c);
    n.cost += m.cost[c];
    n.colOn[c] = 0;
    for (const r of m.colRows[c]) n.rowOn[r] = 0;
  };

  /** Apply essential/dominance reductions until none applies; false when a row became uncoverable. */
  const simplify = (n: Node): boolean => {
    let changed = true;
    while (changed) {
      changed = false;
      // Essential columns: the only column left for some row.
      for (let r = 0; r < nRows; r++) {
        if (n.rowOn[r] === 0) continue;
        const cols = activeCols(n, r);
        if (cols.length === 0) return false;
        if (cols.length === 1) {
          select(n, cols[0]);
          changed = true;
        }
      }
      // Row dominance: a row whose columns include all columns of another row is covered for free.
      for (let a = 0; a < nRows; a++) {
        if (n.rowOn[a] === 0) continue;
        const colsA = activeCols(n, a);
        let pivot = colsA[0];
        let pivotRows = activeRows(n, pivot);
        for (const c of colsA) {
          const rs = activeRows(n, c);
          if (rs.length < pivotRows.length) {
            pivot = c;
            pivotRows = rs;
          }
        }
        stampNow++;
        for (const c of colsA) stamp[c] = stampNow;
        for (const b of pivotRows) {
          if (b === a) continue;
          const colsB = activeCols(n, b);
          if (colsB.length > colsA.length || (colsB.length === colsA.length && b > a)) continue;
          if (colsB.every((c) => stamp[c] === stampNow)) {
            n.rowOn[a] = 0;
            changed = true;
            break;
          }
        }
      }
      // Column dominance: a column whose rows another column of no greater cost also covers is useless.
      for (let j = 0; j < nCols; j++) {
        if (n.colOn[j] === 0) continue;
        const rowsJ = activeRows(n, j);
        if (rowsJ.length === 0) {
          n.colOn[j] = 0;
          changed = true;
          continue;
        }
        let pivot = rowsJ[0];
        let pivotCols = activeCols(n, pivot);
        for (const r of rowsJ) {
          const cs = activeCols(n, r);
          if (cs.length < pivotCols.length) {
            pivot = r;
            pivotCols = cs;
          }
        }
        stampNow++;
        for (const r of rowsJ) stamp[r] = stampNow;
        for (const k of pivotCols) {
          if (k === j || m.cost[k] > m.cost[j]) continue;
          const rowsK = activeRows(n, k);
          if (rowsK.length < rowsJ.length) continue;
          // Equal rows and equal cost: keep the lower-numbered column only.
          if (rowsK.length === rowsJ.length && m.cost[k] === m.cost[j] && k > j) continue;
          let hit = 0;
          for (const r of rowsK) if (stamp[r] === stampNow) hit++;
          if (hit === rowsJ.length) {
            n.colOn[j] = 0;
            changed = true;
            break;
          }
        }
      }
    }
    return true;
  };

  /** Cost every cover of the remaining rows must at least pay: pairwise column-disjoint rows. */
  const lowerBound = (n: Node, open: number[]): number => {
    const rows = open.map((r) => ({ r, cols: activeCols(n, r) }));
    rows.sort((a, b) => a.cols.length - b.cols.length);
    stampNow++;
    let lb = 0;
    for (const { cols } of rows) {
      if (cols.some((c) => stamp[c] === stampNow)) continue;
      let cheapest = Infinity;
      for (const c of cols) {
        stamp[c] = stampNow;
        cheapest = Math.min(cheapest, m.cost[c]);
      }
      lb += cheapest;
    }
    return lb;
  };

  const search = (n: Node): void => {
    nodes++;
    if (!simplify(n)) return;
    const open: number[] = [];
    for (let r = 0; r < nRows; r++) if (n.rowOn[r] === 1) open.push(r);
    if (open.length === 0) {
      if (n.cost < bound) {
        best = { cols: [...n.chosen], cost: n.cost };
        bound = n.cost;
      }
      return;
    }
    if (n.cost >= bound || n.cost + lowerBound(n, open) >= bound) return;
    // Branch on the hardest row; try its columns best first, and exclude each tried column from
    // the later branches (a cover using it was already explored).
    let row = open[0];
    let rowCols = activeCols(n, row);
    for (const r of open) {
      const cs = activeCols(n, r);
      if (cs.length < rowCols.length) {
        row = r;
        rowCols = cs;
      }
    }
    const ranked = rowCols.map((c) => ({ c, gain: activeRows(n, c).length / m.cost[c] }));
    ranked.sort((a, b) => b.gain - a.gain || a.c - b.c);
    const excluded: number[] = [];
    for (const { c } of ranked) {
      const child: Node = { rowOn: n.rowOn.slice(), colOn: n.colOn.slice(), chosen: [...n.chosen], cost: n.cost };
      for (const x of excluded) child.colOn[x] = 0;
      select(child, c);
      search(child);
      excluded.push(c);
    }
  };

  const root: Node = { rowOn: new Uint8Array(nRows).fill(1), colOn: new Uint8Array(nCols).fill(1), chosen: [], cost: 0 };
  try {
    search(root);
  } catch (e) {
    if (e instanceof BudgetExceeded) return { kind: 'budget' };
    throw e;
  }
  if (best === null) return { kind: 'bound-optimal', nodes };
  const found = best as { cols: number[]; cost: number };
  return { kind: 'optimal', cols: found.cols, cost: found.cost, nodes };
}
