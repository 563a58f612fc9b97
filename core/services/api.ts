// The service API shared by both shells (Electron IPC and serve mode) and the renderer: every request
// and response declared once as a zod schema; types are inferred. Values wider than JS numbers travel as decimal strings.
import { z } from 'zod';

/** Design texts larger than this are refused before parsing, so a pasted file cannot stall a shell. */
export const MAX_DESIGN_CHARS = 1_000_000;
/** Longest simulation one call may ask for; the waveform view is built to stay smooth at this size. */
export const MAX_SIM_CYCLES = 1_000_000;
export const MAX_STIMULUS_CHARS = 20_000_000;

const DesignText = z.string().max(MAX_DESIGN_CHARS, `the design is longer than ${MAX_DESIGN_CHARS} characters`);
const FileName = z.string().max(260).regex(/^[^\0/\\]*$/, 'a file name, not a path').optional();

export const DiagnosticSchema = z.object({
  severity: z.enum(['error', 'warning']),
  line: z.number().int().min(1),
  col: z.number().int().min(1),
  message: z.string(),
  hint: z.string(),
});
export type DiagnosticView = z.infer<typeof DiagnosticSchema>;

export const SignalSchema = z.object({ name: z.string(), width: z.number().int().min(1), signed: z.boolean() });
export type SignalView = z.infer<typeof SignalSchema>;

/** A transition as people read it: condition text, target and the actions taken when it fires. */
export const EdgeSchema = z.object({
  from: z.number().int().min(0),
  to: z.number().int().min(0),
  /** Position in the source state's priority list (0 = checked first). */
  priority: z.number().int().min(0),
  condition: z.string().nullable(),
  actions: z.array(z.string()),
});
export type EdgeView = z.infer<typeof EdgeSchema>;

export const StateViewSchema = z.object({
  name: z.string(),
  initial: z.boolean(),
  code: z.number().int().nullable(),
  /** Moore-style actions of the state: output drives and register transfers. */
  actions: z.array(z.string()),
  line: z.number().int().min(1),
});
export type StateView = z.infer<typeof StateViewSchema>;

export const MachineSummarySchema = z.object({
  name: z.string(),
  clockHz: z.number().nullable(),
  inputs: z.array(SignalSchema),
  outputs: z.array(SignalSchema),
  registers: z.array(SignalSchema),
  states: z.array(StateViewSchema),
  edges: z.array(EdgeSchema),
});
export type MachineSummary = z.infer<typeof MachineSummarySchema>;

// ---------------------------------------------------------------- requests

export const DesignCheckParams = z.strictObject({ text: DesignText, file: FileName });
export const StimulusSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('random'), cycles: z.number().int().min(1).max(MAX_SIM_CYCLES), seed: z.number().int().min(0).max(0xffffffff) }),
  z.strictObject({ kind: z.literal('csv'), csv: z.string().max(MAX_STIMULUS_CHARS) }),
]);
export type Stimulus = z.infer<typeof StimulusSchema>;
export const DesignSimulateParams = z.strictObject({ text: DesignText, file: FileName, stimulus: StimulusSchema });
export const EncodingSchema = z.enum(['binary', 'gray', 'onehot', 'custom']);
export type Encoding = z.infer<typeof EncodingSchema>;
export const SynthRunParams = z.strictObject({ text: DesignText, file: FileName, encoding: EncodingSchema });
export const SynthCompareParams = z.strictObject({ text: DesignText, file: FileName });
export const DemoIdSchema = z.string().regex(/^[a-z0-9_]{1,64}$/, 'a demo id is lower-case letters, digits and _');
export const ReadDemoParams = z.strictObject({ id: DemoIdSchema });
const NoParams = z.strictObject({}).optional();

/** Every call is `{ method, params }`; the method picks the params schema. Unknown keys are refused, not dropped. */
export const ApiRequestSchema = z.discriminatedUnion('method', [
  z.strictObject({ method: z.literal('app.info'), params: NoParams }),
  z.strictObject({ method: z.literal('design.check'), params: DesignCheckParams }),
  z.strictObject({ method: z.literal('design.simulate'), params: DesignSimulateParams }),
  z.strictObject({ method: z.literal('synth.run'), params: SynthRunParams }),
  z.strictObject({ method: z.literal('synth.compare'), params: SynthCompareParams }),
  z.strictObject({ method: z.literal('files.listDemos'), params: NoParams }),
  z.strictObject({ method: z.literal('files.readDemo'), params: ReadDemoParams }),
  z.strictObject({ method: z.literal('safety.notes'), params: NoParams }),
]);
export type ApiRequest = z.infer<typeof ApiRequestSchema>;
export type ApiMethod = ApiRequest['method'];
export type ParamsOf<M extends ApiMethod> = Extract<ApiRequest, { method: M }>['params'];

// ---------------------------------------------------------------- responses

export const AppInfoSchema = z.object({
  name: z.literal('Twinstep'),
  version: z.string(),
  shell: z.enum(['electron', 'serve']),
  /** Which optional core stages this build has; the UI says "not yet available" for the others. */
  features: z.object({ simulate: z.boolean(), synth: z.boolean() }),
});

export const CheckResultSchema = z.object({
  diagnostics: z.array(DiagnosticSchema),
  /** Present exactly when the design has no errors. */
  machine: MachineSummarySchema.nullable(),
  fingerprint: z.string().nullable(),
});
export type CheckResultView = z.infer<typeof CheckResultSchema>;

/**
 * A waveform track as a change list: value `values[k]` holds from cycle `at[k]` until the next change.
 * Change lists keep a million-cycle trace small when signals are quiet, and let the view binary-search.
 */
export const TrackSchema = z.object({
  name: z.string(),
  group: z.enum(['input', 'state', 'register', 'output']),
  width: z.number().int().min(1),
  signed: z.boolean(),
  at: z.array(z.number().int().min(0)),
  /** Unsigned bit patterns as decimal strings; for the state track, the state index. */
  values: z.array(z.string().regex(/^\d+$/)),
});
export type Track = z.infer<typeof TrackSchema>;

export const SimulationSchema = z.object({
  cycles: z.number().int().min(0),
  stateNames: z.array(z.string()),
  tracks: z.array(TrackSchema),
  /** Diagnostics of the design or of the stimulus when the run could not start. */
  diagnostics: z.array(DiagnosticSchema),
  stimulusSource: z.enum(['design', 'stimulus']).nullable(),
});
export type SimulationView = z.infer<typeof SimulationSchema>;

/** Synthesis results rendered as text sections, so both shells and the CLI show the same thing. */
export const SynthResultSchema = z.object({
  encoding: EncodingSchema,
  diagnostics: z.array(DiagnosticSchema),
  sections: z.array(z.object({ id: z.string(), title: z.string(), text: z.string() })),
});
export type SynthResultView = z.infer<typeof SynthResultSchema>;

export const SynthCompareSchema = z.object({
  diagnostics: z.array(DiagnosticSchema),
  /** One column per encoding variant (one-hot may have two); `metrics` keys are shared by all columns. */
  columns: z.array(
    z.object({
      label: z.string(),
      /** The encoding choice this column belongs to. */
      encoding: EncodingSchema,
      /** False when the encoding cannot be used for this design; `note` says why. */
      available: z.boolean(),
      note: z.string(),
      metrics: z.record(z.string(), z.number()),
    }),
  ),
  metricNames: z.array(z.object({ key: z.string(), label: z.string() })),
});
export type SynthCompareView = z.infer<typeof SynthCompareSchema>;

export const DemoListSchema = z.object({ demos: z.array(z.object({ id: DemoIdSchema, file: z.string(), summary: z.string() })) });
export const DemoFileSchema = z.object({ id: DemoIdSchema, file: z.string(), text: z.string() });

export const SafetyNotesSchema = z.object({
  title: z.string(),
  sections: z.array(z.object({ id: z.string(), heading: z.string(), items: z.array(z.string()) })),
  deferral: z.string(),
});
export type SafetyNotes = z.infer<typeof SafetyNotesSchema>;

export const RESULT_SCHEMAS = {
  'app.info': AppInfoSchema,
  'design.check': CheckResultSchema,
  'design.simulate': SimulationSchema,
  'synth.run': SynthResultSchema,
  'synth.compare': SynthCompareSchema,
  'files.listDemos': DemoListSchema,
  'files.readDemo': DemoFileSchema,
  'safety.notes': SafetyNotesSchema,
} as const satisfies Record<ApiMethod, z.ZodType>;
export type ResultOf<M extends ApiMethod> = z.infer<(typeof RESULT_SCHEMAS)[M]>;

export const ApiErrorSchema = z.object({
  code: z.enum(['bad-request', 'not-found', 'unavailable', 'too-large', 'internal']),
  message: z.string(),
});
export type ApiError = z.infer<typeof ApiErrorSchema>;

export type ApiReply<T> = { ok: true; value: T } | { ok: false; error: ApiError };
export const ApiReplySchema = z.discriminatedUnion('ok', [z.object({ ok: z.literal(true), value: z.unknown() }), z.object({ ok: z.literal(false), error: ApiErrorSchema })]);

/** WebSocket frames of serve mode: the same calls, tagged with an id so replies can come back out of order. */
export const WsCallSchema = z.object({ id: z.number().int().min(0), call: z.unknown() });
export const WsReplySchema = z.object({ id: z.number().int().min(0), reply: ApiReplySchema });

/** Turns a zod failure into one line naming where and what, for people reading the error. */
export function describeIssues(error: z.ZodError): string {
  return error.issues
    .slice(0, 5)
    .map((i) => `${i.path.length ? i.path.join('.') : '(message)'}: ${i.message}`)
    .join('; ');
}

/** What the Electron preload exposes as `window.twinstep`: one call, the same messages as serve mode. */
export interface TwinstepBridge {
  call(request: unknown): Promise<ApiReply<unknown>>;
}
