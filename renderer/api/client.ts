// The typed client: `call('design.check', {...})` sends through the chosen transport and validates
// the reply with the same zod schemas the service declares, so a bad reply is an error, not a crash.
// Jobs: `startJob` starts one and routes its validated events to a handler until it ends.
import { ApiReplySchema, describeIssues, JobEventSchema, RESULT_SCHEMAS, type ApiMethod, type ApiReply, type JobEvent, type JobStartRequest, type ParamsOf, type ResultOf } from '../../core/services/api';
import { pickTransport, type Transport } from './transport';

let transport: Transport | null = null;
const getTransport = () => (transport ??= pickTransport());

export function transportKind(): Transport['kind'] {
  return getTransport().kind;
}

/** Checks a raw reply against the envelope and the method's result schema. */
export function validateReply<M extends ApiMethod>(method: M, raw: unknown): ApiReply<ResultOf<M>> {
  const envelope = ApiReplySchema.safeParse(raw);
  if (!envelope.success) return { ok: false, error: { code: 'internal', message: `malformed reply to ${method}: ${describeIssues(envelope.error)}` } };
  if (!envelope.data.ok) return envelope.data;
  const value = RESULT_SCHEMAS[method].safeParse(envelope.data.value);
  if (!value.success) return { ok: false, error: { code: 'internal', message: `malformed ${method} result: ${describeIssues(value.error)}` } };
  return { ok: true, value: value.data as ResultOf<M> };
}

export async function call<M extends ApiMethod>(method: M, params: ParamsOf<M>): Promise<ApiReply<ResultOf<M>>> {
  try {
    return validateReply(method, await getTransport().send({ method, params }));
  } catch (e) {
    return { ok: false, error: { code: 'internal', message: `${method} failed: ${e instanceof Error ? e.message : String(e)}` } };
  }
}

/** Whether jobs with pushed progress work over this connection. */
export function jobsAvailable(): Promise<boolean> {
  return getTransport().canPush();
}

/** Routes pushed events to jobs by id; events that arrive before their job's id is known wait here. */
export class JobRouter {
  private readonly handlers = new Map<number, (e: JobEvent) => void>();
  private readonly early = new Map<number, JobEvent[]>();

  /** A raw pushed event: validated, then handed to its job (or kept until the job is registered). */
  receive(raw: unknown, onProblem: (message: string) => void = () => {}): void {
    const parsed = JobEventSchema.safeParse(raw);
    if (!parsed.success) return onProblem(`a malformed job event was ignored: ${describeIssues(parsed.error)}`);
    const e = parsed.data;
    const h = this.handlers.get(e.job);
    if (h) h(e);
    else {
      const list = this.early.get(e.job) ?? [];
      if (list.length < 10_000) list.push(e);
      this.early.set(e.job, list);
    }
    if (h && isFinal(e)) this.handlers.delete(e.job);
  }

  register(job: number, handler: (e: JobEvent) => void): void {
    this.handlers.set(job, handler);
    const waiting = this.early.get(job) ?? [];
    this.early.delete(job);
    for (const e of waiting) {
      handler(e);
      if (isFinal(e)) this.handlers.delete(job);
    }
  }
}

/** Events after which a job sends nothing more. */
export function isFinal(e: JobEvent): boolean {
  return e.type === 'done' || e.type === 'failed' || e.type === 'cancelled';
}

let router: JobRouter | null = null;

function getRouter(): JobRouter {
  if (!router) {
    const r = new JobRouter();
    getTransport().listen((raw) => r.receive(raw, (m) => console.warn(m)));
    router = r;
  }
  return router;
}

export interface JobHandle {
  job: number;
  cancel(): Promise<void>;
}

/** Starts a job; `onEvent` sees each of its events in order, the last being done, failed or cancelled. */
export async function startJob(params: JobStartRequest, onEvent: (e: JobEvent) => void): Promise<ApiReply<JobHandle>> {
  const r = getRouter();
  const reply = await call('job.start', params);
  if (!reply.ok) return reply;
  const job = reply.value.job;
  r.register(job, onEvent);
  return { ok: true, value: { job, cancel: async () => void (await call('job.cancel', { job })) } };
}
