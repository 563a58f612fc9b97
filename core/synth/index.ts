// Front door of controller/datapath synthesis: checked machine in, datapath, transition table,
// state encoding and minimized controller equations out; also the side-by-side encoding comparison.
import { MachineSchema, type Machine } from '../ir/schema';
import { allocateDatapath } from './allocate';
import { analyseConditions, pathRegions } from './conditions';
import { encodeStates } from './encode';
import { controllerFunctions, equationVariables, minimizeFunctions, oneHotForm, totalCost } from './equations';
import { makeNamer } from './expr';
import { SynthOptionsSchema, type ComparisonRow, type Encoding, type Equation, type EncodingComparison, type SynthOptions, type SynthOutcome } from './schema';
import { transitionTable } from './table';

export type { Synthesis, SynthOptions, SynthOutcome, EncodingComparison } from './schema';

/** Structural problems a checked machine never has but a hand-built or loaded one might. */
function machineProblem(m: unknown): string | null {
  const parsed = MachineSchema.safeParse(m);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    return `the machine is malformed at ${issue.path.join('.') || 'top level'}: ${issue.message}`;
  }
  const machine = parsed.data;
  if (machine.resetState >= machine.states.length) return `the reset state index ${machine.resetState} is outside the ${machine.states.length} states`;
  for (const s of machine.states) {
    for (const t of s.transitions) {
      if (t.target >= machine.states.length) return `state '${s.name}' has a transition (line ${t.loc.line}) to state index ${t.target}, outside the ${machine.states.length} states`;
      if (t.condition !== null && t.condition.type.width !== 1) return `state '${s.name}' has a ${t.condition.type.width}-bit condition (line ${t.loc.line}); conditions are 1 bit`;
    }
  }
  return null;
}

/**
 * Exact-method cap for sparse encodings (more than half of the state codes unused: one-hot, and
 * custom codes spread over a wide register). Their functions are mostly don't-care, which makes
 * the tabular exact method merge hundreds of thousands of implicants: measured on random 6-state
 * machines it took 1-28 s per machine where the heuristic took milliseconds for the same cost.
 */
export const SPARSE_EXACT_LIMIT = 8;

function exactLimitFor(encoding: Encoding, requested: number | undefined): number | undefined {
  const sparse = encoding.codes.length * 2 < 2 ** encoding.width;
  return sparse ? Math.min(requested ?? SPARSE_EXACT_LIMIT, SPARSE_EXACT_LIMIT) : requested;
}

/**
 * Largest one-hot machine whose full decode is still computed. The full decode minimizes functions
 * of (states + inputs) variables with about states^2/2 don't-care cubes: measured 2 s at 40 states,
 * 15 s at 64 and 10 minutes at 128; the one-hot form the HDL uses takes well under a second there.
 */
export const FULL_DECODE_MAX_STATES = 32;

/** Names the generated signals must not take. */
function designNames(m: Machine): string[] {
  return [m.name, ...m.inputs.map((x) => x.name), ...m.outputs.map((x) => x.name), ...m.registers.map((x) => x.name), ...m.constants.map((x) => x.name), ...m.states.map((x) => x.name)];
}

export function synthesize(machine: Machine, options: SynthOptions): SynthOutcome {
  const opts = SynthOptionsSchema.safeParse(options);
  if (!opts.success) return { ok: false, error: `invalid synthesis options: ${opts.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}` };
  const problem = machineProblem(machine);
  if (problem !== null) return { ok: false, error: problem };
  try {
    const { encoding: kind, shareUnits = false, exactLimit } = opts.data;
    const namer = makeNamer(designNames(machine));
    const analysis = analyseConditions(machine, namer);
    const regions = analysis.conditions.map((c) => pathRegions(analysis.inputs, c));
    const alloc = allocateDatapath(machine, analysis, regions, shareUnits, namer);
    const table = transitionTable(machine, regions, alloc.pathOutputs);
    const enc = encodeStates(machine, kind, namer);
    if (!enc.ok) return { ok: false, error: enc.error };
    const encoding = enc.encoding;
    const variables = equationVariables(encoding, analysis.inputs);
    const nInputs = analysis.inputs.length;
    const notes: string[] = [];
    const decode = () => minimizeFunctions(controllerFunctions(table, encoding, nInputs, alloc.controlOutputs), variables, exactLimitFor(encoding, exactLimit));
    let equations: Equation[];
    let fullDecode: Equation[] | null = null;
    if (kind === 'onehot') {
      equations = oneHotForm(table, encoding, nInputs, alloc.controlOutputs, variables, exactLimit);
      if (machine.states.length <= FULL_DECODE_MAX_STATES) fullDecode = decode();
      else notes.push(`full decode skipped: ${machine.states.length} states is more than ${FULL_DECODE_MAX_STATES}, where its minimization takes too long; the one-hot form is complete`);
    } else equations = decode();
    return {
      ok: true,
      result: {
        machine: machine.name,
        states: machine.states.map((s) => s.name),
        resetState: machine.resetState,
        datapath: alloc.datapath,
        controller: { inputs: analysis.inputs, outputs: alloc.controlOutputs, conditions: analysis.conditions, table },
        encoding,
        variables,
        equations,
        fullDecode,
        form: kind === 'onehot' ? 'one-hot form' : 'sum-of-products',
        cost: { flipFlops: encoding.width, ...totalCost(equations) },
        notes,
      },
    };
  } catch (e) {
    // A fault here is a bug, but the caller still gets a message instead of a crash.
    return { ok: false, error: `internal synthesis fault: ${e instanceof Error ? e.message : String(e)}` };
  }
}

/** Flip-flops, product terms and literals of every encoding (one-hot both ways; custom when the design gives codes). */
export function compareEncodings(machine: Machine, options: { shareUnits?: boolean; exactLimit?: number } = {}): EncodingComparison {
  const rows: ComparisonRow[] = [];
  const failed = (encoding: ComparisonRow['encoding'], error: string): ComparisonRow => ({ encoding, ok: false, flipFlops: 0, products: 0, literals: 0, gates2: 0, error });
  for (const kind of ['binary', 'gray', 'onehot', 'custom'] as const) {
    const r = synthesize(machine, { ...options, encoding: kind });
    if (!r.ok) {
      rows.push(failed(kind, r.error));
      if (kind === 'onehot') rows.push(failed('onehot full decode', r.error));
      continue;
    }
    const s = r.result;
    rows.push({ encoding: kind, ok: true, flipFlops: s.cost.flipFlops, products: s.cost.products, literals: s.cost.literals, gates2: s.cost.gates2, error: null });
    if (s.fullDecode) {
      const c = totalCost(s.fullDecode);
      rows.push({ encoding: 'onehot full decode', ok: true, flipFlops: s.cost.flipFlops, ...c, error: null });
    } else if (kind === 'onehot') rows.push(failed('onehot full decode', s.notes.find((n) => n.startsWith('full decode')) ?? 'full decode skipped'));
  }
  return { machine: typeof machine?.name === 'string' ? machine.name : 'unnamed', rows };
}
