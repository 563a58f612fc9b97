// The typed client: `call('design.check', {...})` sends through the chosen transport and validates
// the reply with the same zod schemas the service declares, so a bad reply is an error, not a crash.
import { ApiReplySchema, describeIssues, RESULT_SCHEMAS, type ApiMethod, type ApiReply, type ParamsOf, type ResultOf } from '../../core/services/api';
import { pickTransport, type Transport } from './transport';

let transport: Transport | null = null;

export function transportKind(): Transport['kind'] {
  return (transport ??= pickTransport()).kind;
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
  transport ??= pickTransport();
  try {
    return validateReply(method, await transport.send({ method, params }));
  } catch (e) {
    return { ok: false, error: { code: 'internal', message: `${method} failed: ${e instanceof Error ? e.message : String(e)}` } };
  }
}
