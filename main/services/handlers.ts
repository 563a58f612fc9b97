// The service handlers: plain async functions behind the one API both shells expose. Every call is
// validated with zod here, whatever shell it came through, and answers a value or an error, never a throw.
import { readdir, readFile } from 'node:fs/promises';
import path from 'node:path';
import { checkDesign } from '../../core/check/checker';
import { fingerprint } from '../../core/ir/fingerprint';
import type { Machine } from '../../core/ir/schema';
import { parseStimulusCsv, randomStimulus } from '../../core/model/stimulus';
import { simulate } from '../../core/model/trace';
import {
  ApiRequestSchema,
  describeIssues,
  type ApiError,
  type ApiMethod,
  type ApiReply,
  type DiagnosticView,
  type Encoding,
  type ParamsOf,
  type ResultOf,
  type Stimulus,
} from '../../core/services/api';
import { summarize } from './describe';
import { SAFETY_NOTES } from './safety';
import { loadSynth, type SynthAdapter } from './synth-adapter';
import { traceToTracks } from './tracks';

export interface HandlerContext {
  shell: 'electron' | 'serve';
  version: string;
  /** Folder of the bundled demo designs (*.tsm). */
  demoDir: string;
  /** Synthesis, when this build has it; `undefined` means "look for it", `null` means "absent". */
  synth?: SynthAdapter | null;
}

export type Handlers = { [M in ApiMethod]: (params: ParamsOf<M>) => Promise<ResultOf<M>> };

/** An error that carries an API error code up to `dispatch`. */
export class ServiceError extends Error {
  constructor(
    readonly code: ApiError['code'],
    message: string,
  ) {
    super(message);
  }
}

function firstCommentLine(text: string): string {
  const line = text.split(/\r?\n/).find((l) => l.trim().startsWith('--'));
  return line ? line.trim().replace(/^--\s*/, '') : '';
}

function checked(text: string, file: string | undefined): { machine: Machine | null; diagnostics: DiagnosticView[] } {
  return checkDesign(text, file ?? 'design.tsm');
}

function stimulusRows(machine: Machine, s: Stimulus): { rows: bigint[][] } | { diagnostics: DiagnosticView[] } {
  if (s.kind === 'random') return { rows: randomStimulus(machine, s.cycles, s.seed) };
  const parsed = parseStimulusCsv(s.csv, machine);
  if (!parsed.ok) return { diagnostics: parsed.diagnostics };
  if (parsed.rows.length > 1_000_000) return { diagnostics: [{ severity: 'error', line: 1, col: 1, message: `the stimulus has ${parsed.rows.length} rows`, hint: 'one run takes at most 1000000 cycles' }] };
  if (parsed.rows.length === 0) return { diagnostics: [{ severity: 'error', line: 1, col: 1, message: 'the stimulus has a header but no rows', hint: 'add one row of input values per cycle' }] };
  return { rows: parsed.rows };
}

export function createHandlers(ctx: HandlerContext): Handlers {
  let synth: Promise<SynthAdapter | null> | null = ctx.synth === undefined ? null : Promise.resolve(ctx.synth);
  const getSynth = () => (synth ??= loadSynth());

  async function requireSynth(): Promise<SynthAdapter> {
    const s = await getSynth();
    if (!s) throw new ServiceError('unavailable', 'synthesis is not part of this build yet');
    return s;
  }

  return {
    async 'app.info'() {
      return { name: 'Twinstep' as const, version: ctx.version, shell: ctx.shell, features: { simulate: true, synth: (await getSynth()) !== null } };
    },

    async 'design.check'({ text, file }) {
      const r = checked(text, file);
      return { diagnostics: r.diagnostics, machine: r.machine ? summarize(r.machine) : null, fingerprint: r.machine ? fingerprint(r.machine) : null };
    },

    async 'design.simulate'({ text, file, stimulus }) {
      const r = checked(text, file);
      if (!r.machine) return { cycles: 0, stateNames: [], tracks: [], diagnostics: r.diagnostics, stimulusSource: 'design' as const };
      const m = r.machine;
      const rows = stimulusRows(m, stimulus);
      if ('diagnostics' in rows) return { cycles: 0, stateNames: m.states.map((s) => s.name), tracks: [], diagnostics: rows.diagnostics, stimulusSource: 'stimulus' as const };
      const trace = simulate(m, rows.rows, rows.rows.length);
      return { cycles: trace.length, stateNames: m.states.map((s) => s.name), tracks: traceToTracks(m, trace), diagnostics: [], stimulusSource: null };
    },

    async 'synth.run'({ text, file, encoding }) {
      const s = await requireSynth();
      const r = checked(text, file);
      if (!r.machine) return { encoding, diagnostics: r.diagnostics, sections: [] };
      return s.run(r.machine, encoding as Encoding);
    },

    async 'synth.compare'({ text, file }) {
      const s = await requireSynth();
      const r = checked(text, file);
      if (!r.machine) return { diagnostics: r.diagnostics, columns: [], metricNames: [] };
      return s.compare(r.machine);
    },

    async 'files.listDemos'() {
      let names: string[];
      try {
        names = (await readdir(ctx.demoDir)).filter((n) => /^[a-z0-9_]{1,64}\.tsm$/.test(n)).sort();
      } catch {
        throw new ServiceError('not-found', `the demo folder ${ctx.demoDir} cannot be read`);
      }
      const demos = await Promise.all(
        names.map(async (file) => ({ id: file.slice(0, -4), file, summary: firstCommentLine(await readFile(path.join(ctx.demoDir, file), 'utf8')) })),
      );
      return { demos };
    },

    async 'files.readDemo'({ id }) {
      // The id schema admits only [a-z0-9_], so the path cannot leave the demo folder.
      const file = `${id}.tsm`;
      try {
        return { id, file, text: await readFile(path.join(ctx.demoDir, file), 'utf8') };
      } catch {
        throw new ServiceError('not-found', `there is no demo named '${id}'`);
      }
    },

    async 'safety.notes'() {
      return SAFETY_NOTES;
    },
  };
}

/**
 * The single entry of every shell: validates an untrusted message, runs the handler, and wraps the
 * outcome. Malformed messages get `bad-request` naming the field and the problem.
 */
export async function dispatch(handlers: Handlers, message: unknown): Promise<ApiReply<unknown>> {
  const parsed = ApiRequestSchema.safeParse(message);
  if (!parsed.success) return { ok: false, error: { code: 'bad-request', message: describeIssues(parsed.error) } };
  const { method, params } = parsed.data;
  try {
    const handler = handlers[method] as (p: unknown) => Promise<unknown>;
    return { ok: true, value: await handler(params ?? {}) };
  } catch (e) {
    if (e instanceof ServiceError) return { ok: false, error: { code: e.code, message: e.message } };
    return { ok: false, error: { code: 'internal', message: `internal fault in ${method}: ${e instanceof Error ? e.message : String(e)}` } };
  }
}
