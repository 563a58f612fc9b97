// The checked machine: the one intermediate representation every later stage reads.
// Declared once as zod schemas; the TypeScript types are inferred from them.
import { z } from 'zod';

/** A place in the design text (1-based line and column). */
export const SourceLocSchema = z.object({ line: z.number().int().min(1), col: z.number().int().min(1) });
export type SourceLoc = z.infer<typeof SourceLocSchema>;

/** A bit-vector type: width 1..64 (wider only for internal concatenations), two's complement when signed. */
export const BitTypeSchema = z.object({ width: z.number().int().min(1).max(4096), signed: z.boolean() });
export type BitType = z.infer<typeof BitTypeSchema>;

export const BinaryOpSchema = z.enum([
  'add', 'sub', // wrap at the node width; operands have the node width
  'and', 'or', 'xor', // bitwise; operands have the node width
  'land', 'lor', // logical: operand != 0; node width 1
  'eq', 'ne', 'lt', 'le', 'gt', 'ge', // operands share width and signedness; node width 1
]);
export type BinaryOp = z.infer<typeof BinaryOpSchema>;

export const UnaryOpSchema = z.enum(['neg', 'not', 'lnot']);
export type UnaryOp = z.infer<typeof UnaryOpSchema>;

/**
 * Expressions after checking. Every node carries its final type. The checker makes every width
 * change explicit with `resize` nodes, so a stage never has to re-derive width rules:
 * - add/sub/and/or/xor: both operands already have the node's width;
 * - comparisons: both operands have one width and one signedness (the compare is signed if they are);
 * - resize: sign- or zero-extends by the operand's signedness, then takes the node's signedness;
 *   it never narrows (narrowing is a `slice`).
 * Constants hold the bit pattern at their width as an unsigned decimal string (bigint-safe, JSON-safe).
 */
export type Expr =
  | { kind: 'const'; type: BitType; bits: string; name?: string; loc?: SourceLoc }
  | { kind: 'input'; type: BitType; name: string; loc?: SourceLoc }
  | { kind: 'reg'; type: BitType; name: string; loc?: SourceLoc }
  | { kind: 'unary'; type: BitType; op: UnaryOp; arg: Expr; loc?: SourceLoc }
  | { kind: 'binary'; type: BitType; op: BinaryOp; left: Expr; right: Expr; loc?: SourceLoc }
  | { kind: 'shift'; type: BitType; dir: 'left' | 'right'; amount: number; arg: Expr; loc?: SourceLoc }
  | { kind: 'slice'; type: BitType; msb: number; lsb: number; arg: Expr; loc?: SourceLoc }
  | { kind: 'concat'; type: BitType; parts: Expr[]; loc?: SourceLoc }
  | { kind: 'resize'; type: BitType; arg: Expr; loc?: SourceLoc };

export const ExprSchema: z.ZodType<Expr> = z.lazy(() =>
  z.discriminatedUnion('kind', [
    z.object({ kind: z.literal('const'), type: BitTypeSchema, bits: z.string().regex(/^\d+$/), name: z.string().optional(), loc: SourceLocSchema.optional() }),
    z.object({ kind: z.literal('input'), type: BitTypeSchema, name: z.string(), loc: SourceLocSchema.optional() }),
    z.object({ kind: z.literal('reg'), type: BitTypeSchema, name: z.string(), loc: SourceLocSchema.optional() }),
    z.object({ kind: z.literal('unary'), type: BitTypeSchema, op: UnaryOpSchema, arg: ExprSchema, loc: SourceLocSchema.optional() }),
    z.object({ kind: z.literal('binary'), type: BitTypeSchema, op: BinaryOpSchema, left: ExprSchema, right: ExprSchema, loc: SourceLocSchema.optional() }),
    z.object({ kind: z.literal('shift'), type: BitTypeSchema, dir: z.enum(['left', 'right']), amount: z.number().int().min(0), arg: ExprSchema, loc: SourceLocSchema.optional() }),
    z.object({ kind: z.literal('slice'), type: BitTypeSchema, msb: z.number().int().min(0), lsb: z.number().int().min(0), arg: ExprSchema, loc: SourceLocSchema.optional() }),
    z.object({ kind: z.literal('concat'), type: BitTypeSchema, parts: z.array(ExprSchema).min(1), loc: SourceLocSchema.optional() }),
    z.object({ kind: z.literal('resize'), type: BitTypeSchema, arg: ExprSchema, loc: SourceLocSchema.optional() }),
  ]),
);

export const InputSchema = z.object({
  name: z.string(),
  type: BitTypeSchema,
  /** True when the HDL puts a two-flip-flop synchronizer on this input (1-bit inputs only, default on). */
  synchronize: z.boolean(),
  loc: SourceLocSchema,
});
export type Input = z.infer<typeof InputSchema>;

export const OutputSchema = z.object({
  name: z.string(),
  type: BitTypeSchema,
  /** Value when neither the state nor the firing transition drives the output (bit pattern). */
  defaultBits: z.string().regex(/^\d+$/),
  loc: SourceLocSchema,
});
export type Output = z.infer<typeof OutputSchema>;

export const RegisterSchema = z.object({
  name: z.string(),
  type: BitTypeSchema,
  resetBits: z.string().regex(/^\d+$/),
  loc: SourceLocSchema,
});
export type Register = z.infer<typeof RegisterSchema>;

export const ConstantSchema = z.object({ name: z.string(), type: BitTypeSchema, bits: z.string().regex(/^\d+$/), loc: SourceLocSchema });
export type Constant = z.infer<typeof ConstantSchema>;

/** `reg <- value`: takes effect at the clock edge; reads the values from before the edge. */
export const TransferSchema = z.object({ register: z.string(), value: ExprSchema, loc: SourceLocSchema });
export type Transfer = z.infer<typeof TransferSchema>;

/** `out = value`: combinational for as long as the state (or the firing transition) lasts. */
export const OutputAssignSchema = z.object({ output: z.string(), value: ExprSchema, loc: SourceLocSchema });
export type OutputAssign = z.infer<typeof OutputAssignSchema>;

export const TransitionSchema = z.object({
  /** Index of the target state in `machine.states`. */
  target: z.number().int().min(0),
  /** 1-bit condition; null for an unconditional transition. */
  condition: ExprSchema.nullable(),
  transfers: z.array(TransferSchema),
  outputs: z.array(OutputAssignSchema),
  loc: SourceLocSchema,
});
export type Transition = z.infer<typeof TransitionSchema>;

export const StateSchema = z.object({
  name: z.string(),
  /** Optional user-assigned code for the `custom` encoding. */
  code: z.number().int().min(0).nullable(),
  transfers: z.array(TransferSchema),
  outputs: z.array(OutputAssignSchema),
  /** In priority order: the first whose condition holds fires; if none does, the machine stays. */
  transitions: z.array(TransitionSchema),
  loc: SourceLocSchema,
});
export type State = z.infer<typeof StateSchema>;

export const MachineSchema = z.object({
  irVersion: z.literal(1),
  name: z.string(),
  /** Board clock in Hz, if the design states it. */
  clockHz: z.number().positive().nullable(),
  inputs: z.array(InputSchema),
  outputs: z.array(OutputSchema),
  registers: z.array(RegisterSchema),
  constants: z.array(ConstantSchema),
  states: z.array(StateSchema).min(1),
  /** Index of the state entered on reset. */
  resetState: z.number().int().min(0),
  /** Name of the design file, for messages only. */
  file: z.string(),
});
export type Machine = z.infer<typeof MachineSchema>;
