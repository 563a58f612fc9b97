// The controller's transition table: per state, one row per input cube of each path (transitions in
// priority order, then the implicit stay), with the next state and the value of every controller output.
import type { Machine } from '../ir/schema';
import type { PathRegion } from './conditions';
import type { TableRow } from './schema';

/** Rows in state order; within a state the cubes are disjoint and together cover every input. */
export function transitionTable(m: Machine, regions: readonly PathRegion[][], pathOutputs: readonly string[][]): TableRow[] {
  const rows: TableRow[] = [];
  regions.forEach((paths, state) =>
    paths.forEach((p, j) => {
      const next = p.transition === null ? state : m.states[state].transitions[p.transition].target;
      for (const cube of p.cubes) rows.push({ state, cube, next, transition: p.transition, outputs: pathOutputs[state][j] });
    }),
  );
  return rows;
}
