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

export const ControllerStyleSchema = z.enum(['behavioral', 'equations']);
export const ResetPolaritySchema = z.enum(['low', 'high']);
/** Probe settings for the generated board top; clock and baud as the board maker's documentation gives them. */
export const ProbeSettingsSchema = z.strictObject({
  clockHz: z.number().positive().max(5e9),
  baud: z.number().int().min(300).max(20_000_000),
  /** The board waits halted for the host's first command instead of running from reset. */
  startHalted: z.boolean(),
});
export type ProbeSettings = z.infer<typeof ProbeSettingsSchema>;
export const HdlGenerateParams = z.strictObject({
  text: DesignText,
  file: FileName,
  encoding: EncodingSchema,
  controller: ControllerStyleSchema,
  reset: ResetPolaritySchema,
  /** Null: the plain design files only. */
  probe: ProbeSettingsSchema.nullable(),
});
export type HdlGenerateRequest = z.infer<typeof HdlGenerateParams>;

/** A short name for a job's event stream, unique per connection. */
export const JobIdSchema = z.number().int().min(1);
/** Fault specs in the emulator's text form (`stuck:REG:BIT:V@CYCLE`, `transition:A->B@CYCLE`, `drop:N`, `baud:RATIO`). */
export const FaultSpecSchema = z.string().min(1).max(200);
export const CaptureNameSchema = z.string().regex(/^[A-Za-z0-9][A-Za-z0-9._-]{0,120}\.twcap$/, 'a capture name is letters, digits, . _ - and ends in .twcap');
/** Uploaded captures travel base64-encoded; larger ones are opened from the capture folder. */
export const MAX_UPLOAD_BASE64 = 24_000_000;

/** The board link of a bench session: the emulator in the main process, or a serial port. */
export const LinkSchema = z.discriminatedUnion('kind', [
  z.strictObject({
    kind: z.literal('emulator'),
    faults: z.array(FaultSpecSchema).max(16),
    /** Seed of the emulated board's pin stimulus. */
    seed: z.number().int().min(0).max(0xffffffff),
    /** Line rate the emulator is paced at (bytes leave at baud / 10 per second, as on an 8N1 line). */
    baud: z.number().int().min(300).max(20_000_000),
  }),
  z.strictObject({ kind: z.literal('serial'), port: z.string().min(1).max(260), baud: z.number().int().min(300).max(20_000_000) }),
]);
export type LinkRequest = z.infer<typeof LinkSchema>;

export const JobStartParams = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('simulate'), text: DesignText, file: FileName, stimulus: StimulusSchema }),
  z.strictObject({
    kind: z.literal('bench'),
    text: DesignText,
    file: FileName,
    encoding: EncodingSchema,
    link: LinkSchema,
    /** Record the received bytes to a capture file in the capture folder. */
    record: z.boolean(),
    /** Host-driven inputs: the host sends seeded random input vectors and steps the board one cycle each. */
    hostInputs: z.strictObject({ seed: z.number().int().min(0).max(0xffffffff) }).nullable(),
    /** The safety notes were acknowledged in this window before connecting. */
    safetyAcknowledged: z.literal(true, { message: 'acknowledge the bench safety notes before the first connect' }),
  }),
  z.strictObject({
    kind: z.literal('replay'),
    text: DesignText,
    file: FileName,
    source: z.discriminatedUnion('kind', [
      z.strictObject({ kind: z.literal('folder'), name: CaptureNameSchema }),
      z.strictObject({ kind: z.literal('upload'), name: z.string().max(260), base64: z.string().max(MAX_UPLOAD_BASE64).regex(/^[A-Za-z0-9+/]*={0,2}$/, 'base64 text') }),
    ]),
  }),
]);
export type JobStartRequest = z.infer<typeof JobStartParams>;
export const BenchCommandSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('run') }),
  z.strictObject({ kind: z.literal('halt') }),
  z.strictObject({ kind: z.literal('step'), cycles: z.number().int().min(1).max(0xffff) }),
  z.strictObject({ kind: z.literal('reset') }),
]);
export type BenchCommand = z.infer<typeof BenchCommandSchema>;

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
  z.strictObject({ method: z.literal('hdl.generate'), params: HdlGenerateParams }),
  z.strictObject({ method: z.literal('hdl.exportFolder'), params: HdlGenerateParams }),
  z.strictObject({ method: z.literal('job.start'), params: JobStartParams }),
  z.strictObject({ method: z.literal('job.cancel'), params: z.strictObject({ job: JobIdSchema }) }),
  z.strictObject({ method: z.literal('bench.command'), params: z.strictObject({ job: JobIdSchema, command: BenchCommandSchema }) }),
  z.strictObject({ method: z.literal('bench.ports'), params: NoParams }),
  z.strictObject({ method: z.literal('capture.list'), params: NoParams }),
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
  features: z.object({
    simulate: z.boolean(),
    synth: z.boolean(),
    hdl: z.boolean(),
    /** Long work runs as jobs with progress events (needs a push channel: WebSocket or Electron IPC). */
    jobs: z.boolean(),
    /** A folder dialog for exporting files (the desktop window); the browser downloads instead. */
    folderExport: z.boolean(),
  }),
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
  /** `status` tracks (datapath comparator outputs) come only from a board's frames. */
  group: z.enum(['input', 'state', 'register', 'status', 'output']),
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

export const HdlFileSchema = z.object({
  name: z.string().regex(/^[A-Za-z0-9_]+\.v$/),
  /** `design`: the controller, datapath and top; `probe`: the board top with the UART probe and its blocks. */
  group: z.enum(['design', 'probe']),
  /** The file's role, from its first line. */
  role: z.string(),
  text: z.string(),
});
export type HdlFileView = z.infer<typeof HdlFileSchema>;
export const HdlResultSchema = z.object({
  diagnostics: z.array(DiagnosticSchema),
  files: z.array(HdlFileSchema),
  /** Probe notes (baud, frame size, lockstep pace) when the probe was generated. */
  notes: z.array(z.string()),
  /** Why the probe files are missing when they were asked for. */
  probeError: z.string().nullable(),
});
export type HdlResultView = z.infer<typeof HdlResultSchema>;
export const HdlExportSchema = z.object({ folder: z.string().nullable(), written: z.array(z.string()) });

export const JobStartedSchema = z.object({ job: JobIdSchema });
export const JobCancelSchema = z.object({ cancelled: z.boolean() });
export const BenchCommandResultSchema = z.object({ sent: z.string() });
export const PortListSchema = z.object({
  ports: z.array(z.object({ path: z.string(), description: z.string() })),
  /** Why the list may be empty or incomplete (no serial support, no permission...). */
  note: z.string().nullable(),
});
export const CaptureListSchema = z.object({
  folder: z.string(),
  captures: z.array(z.object({ name: z.string(), bytes: z.number().int().min(0), modified: z.string() })),
});

export const RESULT_SCHEMAS = {
  'app.info': AppInfoSchema,
  'design.check': CheckResultSchema,
  'design.simulate': SimulationSchema,
  'synth.run': SynthResultSchema,
  'synth.compare': SynthCompareSchema,
  'files.listDemos': DemoListSchema,
  'files.readDemo': DemoFileSchema,
  'safety.notes': SafetyNotesSchema,
  'hdl.generate': HdlResultSchema,
  'hdl.exportFolder': HdlExportSchema,
  'job.start': JobStartedSchema,
  'job.cancel': JobCancelSchema,
  'bench.command': BenchCommandResultSchema,
  'bench.ports': PortListSchema,
  'capture.list': CaptureListSchema,
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

// ---------------------------------------------------------------- job events (pushed to the caller)

export const TrackMetaSchema = TrackSchema.pick({ name: true, group: true, width: true, signed: true });
export type TrackMeta = z.infer<typeof TrackMetaSchema>;
/** New entries of one track's change list, in order; the first may repeat the last value sent (then it is no change). */
export const TrackAppendSchema = TrackSchema.pick({ at: true, values: true });
export type TrackAppend = z.infer<typeof TrackAppendSchema>;

export const CountersSchema = z.object({
  /** Samples on the session's axis: frames received plus cycles lost in gaps. */
  samples: z.number().int().min(0),
  cycleFrames: z.number().int().min(0),
  bytes: z.number().int().min(0),
  framesPerSec: z.number().min(0),
  crcErrors: z.number().int().min(0),
  /** Frames lost (gaps in the cycle counter). */
  drops: z.number().int().min(0),
  gaps: z.number().int().min(0),
  divergences: z.number().int().min(0),
  divergentCycles: z.number().int().min(0),
  framingErrors: z.number().int().min(0),
  decodeErrors: z.number().int().min(0),
});
export type Counters = z.infer<typeof CountersSchema>;

export const DivergenceViewSchema = z.object({
  /** Position on the session's waveform axis. */
  sample: z.number().int().min(0),
  /** The board's design cycle (restarts at 0 after a reset). */
  cycle: z.number().int().min(0),
  sinceReset: z.number().int().nullable(),
  signal: z.string(),
  /** Index of the signal's track in the session's track list. */
  track: z.number().int().min(0),
  group: z.enum(['state', 'register', 'status', 'output']),
  expected: z.string(),
  actual: z.string(),
  expectedBits: z.string(),
  actualBits: z.string(),
  differingBits: z.array(z.number().int().min(0)),
  /** The board's state in that cycle, and the state the model expected there (null when it expects none). */
  state: z.string(),
  expectedState: z.string().nullable(),
  transition: z.object({ from: z.string(), expected: z.string(), board: z.string() }).nullable(),
  explanation: z.string(),
  inputsChanged: z.array(z.string()),
});
export type DivergenceView = z.infer<typeof DivergenceViewSchema>;

export const SessionLogSchema = z.object({ sample: z.number().int().min(0), kind: z.enum(['gap', 'decode-error', 'identity', 'note']), text: z.string() });
export type SessionLogEntry = z.infer<typeof SessionLogSchema>;
export const HintSchema = z.object({ cause: z.string(), text: z.string(), evidence: z.string() });
export type HintView = z.infer<typeof HintSchema>;

const Job = { job: JobIdSchema };
export const JobEventSchema = z.discriminatedUnion('type', [
  z.object({ ...Job, type: z.literal('progress'), done: z.number().min(0), total: z.number().min(0).nullable(), unit: z.string(), message: z.string() }),
  z.object({ ...Job, type: z.literal('sim-start'), stateNames: z.array(z.string()), tracks: z.array(TrackMetaSchema) }),
  z.object({ ...Job, type: z.literal('sim-chunk'), cycles: z.number().int().min(0), tracks: z.array(TrackAppendSchema) }),
  z.object({
    ...Job,
    type: z.literal('session-start'),
    source: z.enum(['emulator', 'serial', 'replay']),
    title: z.string(),
    stateNames: z.array(z.string()),
    tracks: z.array(TrackMetaSchema),
    /** Per track: whether the model makes claims about it (an expected track follows in the deltas). */
    compared: z.array(z.boolean()),
    /** Path of the capture being written or replayed. */
    capture: z.string().nullable(),
    notes: z.array(z.string()),
  }),
  z.object({
    ...Job,
    type: z.literal('session-delta'),
    tracks: z.array(TrackAppendSchema),
    expected: z.array(TrackAppendSchema),
    divergences: z.array(DivergenceViewSchema),
    log: z.array(SessionLogSchema),
    counters: CountersSchema,
    /** The waveform stopped growing at its memory cap; counters go on. */
    capped: z.boolean(),
  }),
  z.object({ ...Job, type: z.literal('session-end'), reason: z.string(), summary: z.string(), hints: z.array(HintSchema), counters: CountersSchema }),
  z.object({ ...Job, type: z.literal('done'), message: z.string() }),
  z.object({ ...Job, type: z.literal('failed'), error: z.string(), diagnostics: z.array(DiagnosticSchema) }),
  z.object({ ...Job, type: z.literal('cancelled') }),
]);
export type JobEvent = z.infer<typeof JobEventSchema>;
/** Serve mode pushes job events over the WebSocket as `{ push: event }`, beside the `{ id, reply }` frames. */
export const WsPushSchema = z.object({ push: JobEventSchema });

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
  /** Job events pushed by the main process; returns a function that stops listening. */
  onEvent?(listener: (event: unknown) => void): () => void;
}
