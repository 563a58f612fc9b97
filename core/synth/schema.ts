// Result types of controller/datapath synthesis, declared once as zod schemas (types inferred).
// A Synthesis is plain JSON data: the CLI prints it with --json, the HDL stage and the tests read it.
import { z } from 'zod';
import { BitTypeSchema, ExprSchema } from '../ir/schema';

/** A product term over the variables of one problem: '0', '1' or '-' per variable, variable 0 leftmost. */
export const CubeSchema = z.string().regex(/^[01-]*$/);
export type CubeText = z.infer<typeof CubeSchema>;

export const EncodingKindSchema = z.enum(['binary', 'gray', 'onehot', 'custom']);
export type EncodingKind = z.infer<typeof EncodingKindSchema>;

/** Boolean connective tree over controller inputs (by name): the control view of a transition condition. */
export type BoolExpr =
  | { k: 'const'; value: boolean }
  | { k: 'var'; name: string }
  | { k: 'not'; arg: BoolExpr }
  | { k: 'and' | 'or' | 'xor'; left: BoolExpr; right: BoolExpr };

export const BoolExprSchema: z.ZodType<BoolExpr> = z.lazy(() =>
  z.discriminatedUnion('k', [
    z.object({ k: z.literal('const'), value: z.boolean() }),
    z.object({ k: z.literal('var'), name: z.string() }),
    z.object({ k: z.literal('not'), arg: BoolExprSchema }),
    z.object({ k: z.enum(['and', 'or', 'xor']), left: BoolExprSchema, right: BoolExprSchema }),
  ]),
);

/** A signal the datapath reports to the controller: one bit computed from registers and inputs. */
export const StatusSignalSchema = z.object({
  name: z.string(),
  /** The 1-bit expression it carries (locations stripped). */
  expr: ExprSchema,
  text: z.string(),
  kind: z.enum(['comparator', 'bit tap', 'logic']),
  /** Functional unit that computes it, when it needs one (bit taps do not). */
  unit: z.string().nullable(),
  /** States whose transitions test it. */
  states: z.array(z.number().int().min(0)),
});
export type StatusSignal = z.infer<typeof StatusSignalSchema>;

export const ControllerInputSchema = z.object({
  name: z.string(),
  /** A 1-bit design input used directly, or a status signal from the datapath. */
  from: z.enum(['input', 'status']),
});
export type ControllerInput = z.infer<typeof ControllerInputSchema>;

export const ControlRoleSchema = z.enum(['output', 'load', 'select']);

export const ControllerOutputSchema = z.object({
  name: z.string(),
  /** `output`: a 1-bit design output; `load`: a load enable; `select`: one bit of a multiplexer select. */
  role: ControlRoleSchema,
  /** The design output or register, or the multiplexer, this signal drives. */
  drives: z.string(),
  /** For a select: which bit of the select code (0 = least significant). */
  bit: z.number().int().min(0).nullable(),
});
export type ControllerOutput = z.infer<typeof ControllerOutputSchema>;

export const UnitKindSchema = z.enum(['adder', 'subtractor', 'negator', 'equality comparator', 'magnitude comparator', 'shifter', 'logic unit']);
export type UnitKind = z.infer<typeof UnitKindSchema>;

/** One distinct operation of the design (structurally distinct expression node that needs gates). */
export const OperationSchema = z.object({
  id: z.string(),
  kind: UnitKindSchema,
  /** Operator as in the IR: add, sub, eq, lt, and, shift-left-2 ... */
  op: z.string(),
  /** Operand width in bits. */
  width: z.number().int().min(1),
  signed: z.boolean(),
  expr: ExprSchema,
  text: z.string(),
  /** States in which its result is used. */
  states: z.array(z.number().int().min(0)),
});
export type Operation = z.infer<typeof OperationSchema>;

export const UnitSchema = z.object({
  name: z.string(),
  kind: UnitKindSchema,
  width: z.number().int().min(1),
  /** Ids of the operations this unit performs (more than one only when units are shared). */
  operations: z.array(z.string()),
  /** Distinct operand sources per port; a port with more than one needs a multiplexer. */
  portSources: z.array(z.number().int().min(1)),
});
export type Unit = z.infer<typeof UnitSchema>;

/** One input of a register or output multiplexer. */
export const SourceSchema = z.object({
  expr: ExprSchema,
  text: z.string(),
  /** Where the value comes from: a unit's name, or 'register', 'input', 'constant', 'wiring'. */
  from: z.string(),
});
export type Source = z.infer<typeof SourceSchema>;

export const RegisterPathSchema = z.object({
  register: z.string(),
  type: BitTypeSchema,
  resetBits: z.string(),
  /** Load enable signal; null when nothing ever loads the register (it keeps its reset value). */
  loadEnable: z.string().nullable(),
  /** Select signal names, least significant bit first; empty when there is at most one source. */
  select: z.array(z.string()),
  /** Multiplexer inputs: select code i picks sources[i]. */
  sources: z.array(SourceSchema),
});
export type RegisterPath = z.infer<typeof RegisterPathSchema>;

export const DataOutputSchema = z.object({
  output: z.string(),
  type: BitTypeSchema,
  select: z.array(z.string()),
  sources: z.array(SourceSchema),
});
export type DataOutput = z.infer<typeof DataOutputSchema>;

export const DatapathSchema = z.object({
  registers: z.array(RegisterPathSchema),
  /** Design outputs the datapath drives (multi-bit, or not constant per state/transition). */
  outputs: z.array(DataOutputSchema),
  operations: z.array(OperationSchema),
  units: z.array(UnitSchema),
  shareUnits: z.boolean(),
  /** Unit counts without and with sharing, whichever was asked for. */
  unitCount: z.object({ unshared: z.number().int().min(0), shared: z.number().int().min(0) }),
  statusSignals: z.array(StatusSignalSchema),
});
export type Datapath = z.infer<typeof DatapathSchema>;

/** One row of the transition table: a state, an input cube, the next state and every controller output. */
export const TableRowSchema = z.object({
  state: z.number().int().min(0),
  /** Over the controller inputs in order; '-' where the state does not test the input. */
  cube: CubeSchema,
  next: z.number().int().min(0),
  /** Index of the firing transition within the state, or null for the implicit stay. */
  transition: z.number().int().min(0).nullable(),
  /** One character per controller output, in order: '0', '1' or '-' (don't care). */
  outputs: CubeSchema,
});
export type TableRow = z.infer<typeof TableRowSchema>;

export const ControllerSchema = z.object({
  inputs: z.array(ControllerInputSchema),
  outputs: z.array(ControllerOutputSchema),
  /** Condition of each transition as a connective tree over controller inputs (null: unconditional). */
  conditions: z.array(z.array(BoolExprSchema.nullable())),
  table: z.array(TableRowSchema),
});
export type Controller = z.infer<typeof ControllerSchema>;

export const EncodingSchema = z.object({
  kind: EncodingKindSchema,
  /** Flip-flops of the state register. */
  width: z.number().int().min(1),
  /** State bit names, most significant (leftmost in a code) first. */
  bits: z.array(z.string()),
  /** Code of each state, as a bit string in `bits` order. */
  codes: z.array(z.string().regex(/^[01]+$/)),
  /** Code the state register takes on reset (the initial state's). */
  resetCode: z.string().regex(/^[01]+$/),
  /** Codes no state uses: don't-cares in every equation. */
  unusedCodes: z.array(CubeSchema),
});
export type Encoding = z.infer<typeof EncodingSchema>;

export const CostSchema = z.object({
  products: z.number().int().min(0),
  literals: z.number().int().min(0),
  gates2: z.number().int().min(0),
});
export type Cost = z.infer<typeof CostSchema>;

export const EquationSchema = z.object({
  /** `q1'` for a next-state bit, or a controller output name. */
  target: z.string(),
  kind: z.enum(['next-state', 'output']),
  /** Sum of products over `Synthesis.variables`. */
  cover: z.array(CubeSchema),
  method: z.enum(['exact', 'heuristic', 'one-hot form']),
  cost: CostSchema,
  text: z.string(),
});
export type Equation = z.infer<typeof EquationSchema>;

export const SynthesisSchema = z.object({
  machine: z.string(),
  states: z.array(z.string()),
  resetState: z.number().int().min(0),
  datapath: DatapathSchema,
  controller: ControllerSchema,
  encoding: EncodingSchema,
  /** Equation variables: the state bits (encoding order) then the controller inputs. */
  variables: z.array(z.string()),
  /** The equations the HDL realizes: every next-state bit, then every controller output. */
  equations: z.array(EquationSchema),
  /** One-hot only: the fully decoded alternative, minimized with every non-one-hot code as don't-care (null when skipped, see notes). */
  fullDecode: z.array(EquationSchema).nullable(),
  /** Which form the HDL uses. */
  form: z.enum(['sum-of-products', 'one-hot form']),
  cost: CostSchema.extend({ flipFlops: z.number().int().min(1) }),
  /** Remarks for the reader: parts skipped and why. */
  notes: z.array(z.string()),
});
export type Synthesis = z.infer<typeof SynthesisSchema>;

export const SynthOptionsSchema = z.object({
  encoding: EncodingKindSchema,
  shareUnits: z.boolean().optional(),
  /** Largest variable count for which the minimizer tries its exact method. */
  exactLimit: z.number().int().min(0).optional(),
});
export type SynthOptions = z.infer<typeof SynthOptionsSchema>;

export type SynthOutcome = { ok: true; result: Synthesis } | { ok: false; error: string };

export const ComparisonRowSchema = z.object({
  encoding: z.enum(['binary', 'gray', 'onehot', 'onehot full decode', 'custom']),
  ok: z.boolean(),
  flipFlops: z.number().int().min(0),
  products: z.number().int().min(0),
  literals: z.number().int().min(0),
  gates2: z.number().int().min(0),
  /** Why the encoding could not be used (custom without codes, for example). */
  error: z.string().nullable(),
});
export type ComparisonRow = z.infer<typeof ComparisonRowSchema>;

export const EncodingComparisonSchema = z.object({ machine: z.string(), rows: z.array(ComparisonRowSchema) });
export type EncodingComparison = z.infer<typeof EncodingComparisonSchema>;
