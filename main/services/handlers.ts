// The service handlers: plain async functions behind the one API both shells expose. Every call is
// validated with zod here, whatever shell it came through, and answers a value or an error, never a throw.
import { mkdir, readdir, readFile, stat, writeFile } from 'node:fs/promises';
import path from 'node:path';
import { checkDesign } from '../../core/check/checker';
import { fingerprint } from '../../core/ir/fingerprint';
import type { Machine } from '../../core/ir/schema';
import { parseStimulusCsv, randomStimulus } from '../../core/model/stimulus';
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
import { hdlFiles } from '../../core/services/hdl';
import { simulateTracks, type FastStimulus } from '../../core/services/fastsim';
import { summarize } from './describe';
import { JobManager, type Caller } from './jobs';
import type { SerialStream } from './serial-adapter';
import { benchJob, replayJob, simulateJob } from './work';
import { SAFETY_NOTES } from './safety';
import { loadSynth, type SynthAdapter } from './synth-adapter';

export interface HandlerContext {
  shell: 'electron' | 'serve';
  version: string;
  /** Folder of the bundled demo designs (*.tsm). */
  demoDir: string;
  /** Synthesis, when this build has it; `undefined` means "look for it", `null` means "absent". */
  synth?: SynthAdapter | null;
  /** Where bench sessions record captures and where replays look for them. */
  captureDir?: string;
  /** The desktop shell's folder dialog; absent in serve mode, where the browser downloads instead. */
  pickFolder?: () => Promise<string | null>;
  /** Serial ports (main/serial); absent where this build has no serial support. */
  serial?: {
    list(): Promise<{ ports: { path: string; description: string }[]; note: string | null }>;
    open(port: string, baud: number): Promise<SerialStream>;
  } | null;
  /** Shared by the shell's connections; one is made when absent. */
  jobs?: JobManager;
}

/** The connection a call came through; jobs push their events to it. Null for plain HTTP calls. */
export type CallerOrNull = Caller | null;
export type Handlers = { [M in ApiMethod]: (params: ParamsOf<M>, caller: CallerOrNull) => Promise<ResultOf<M>> };

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

/** The stimulus as the fast simulator takes it, with its cycle count; CSV problems as diagnostics. */
function fastStimulus(machine: Machine, s: Stimulus): { stimulus: FastStimulus; cycles: number } | { diagnostics: DiagnosticView[] } {
  if (s.kind === 'random') return { stimulus: { kind: 'random', seed: s.seed }, cycles: s.cycles };
  const rows = stimulusRows(machine, s);
  if ('diagnostics' in rows) return rows;
  return { stimulus: { kind: 'rows', rows: rows.rows }, cycles: rows.rows.length };
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

  const jobs = ctx.jobs ?? new JobManager();
  const captureDir = ctx.captureDir ?? path.join(process.cwd(), 'captures');

  function requireCaller(caller: CallerOrNull, what: string): Caller {
    if (!caller) throw new ServiceError('unavailable', `${what} reports progress as it goes, which needs the app's live connection (WebSocket or the desktop window), not a plain HTTP call`);
    return caller;
  }

  /** The checked machine, or a ServiceError naming the first design error. */
  function machineOf(text: string, file: string | undefined): Machine {
    const r = checked(text, file);
    if (!r.machine) {
      const d = r.diagnostics.find((x) => x.severity === 'error');
      throw new ServiceError('bad-request', d ? `the design has errors: line ${d.line}:${d.col}: ${d.message}` : 'the design has errors');
    }
    return r.machine;
  }

  async function requireSynth(): Promise<SynthAdapter> {
    const s = await getSynth();
    if (!s) throw new ServiceError('unavailable', 'synthesis is not part of this build yet');
    return s;
  }

  return {
    async 'app.info'() {
      const synthOk = (await getSynth()) !== null;
      return { name: 'Twinstep' as const, version: ctx.version, shell: ctx.shell, features: { simulate: true, synth: synthOk, hdl: synthOk, jobs: true, folderExport: ctx.pickFolder !== undefined } };
    },

    async 'design.check'({ text, file }) {
      const r = checked(text, file);
      return { diagnostics: r.diagnostics, machine: r.machine ? summarize(r.machine) : null, fingerprint: r.machine ? fingerprint(r.machine) : null };
    },

    async 'design.simulate'({ text, file, stimulus }) {
      const r = checked(text, file);
      if (!r.machine) return { cycles: 0, stateNames: [], tracks: [], diagnostics: r.diagnostics, stimulusSource: 'design' as const };
      const m = r.machine;
      const stim = fastStimulus(m, stimulus);
      if ('diagnostics' in stim) return { cycles: 0, stateNames: m.states.map((s) => s.name), tracks: [], diagnostics: stim.diagnostics, stimulusSource: 'stimulus' as const };
      const run = simulateTracks(m, stim.stimulus, stim.cycles);
      return { cycles: run.cycles, stateNames: m.states.map((s) => s.name), tracks: run.tracks, diagnostics: [], stimulusSource: null };
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

    async 'hdl.generate'(req) {
      await requireSynth();
      const r = checked(req.text, req.file);
      if (!r.machine) return { diagnostics: r.diagnostics, files: [], notes: [], probeError: null };
      return hdlFiles(r.machine, req);
    },

    async 'hdl.exportFolder'(req) {
      if (!ctx.pickFolder) throw new ServiceError('unavailable', 'exporting to a folder needs the desktop window; the browser downloads the files instead');
      const r = hdlFiles(machineOf(req.text, req.file), req);
      if (r.diagnostics.length) throw new ServiceError('bad-request', r.diagnostics[0].message);
      const folder = await ctx.pickFolder();
      if (!folder) return { folder: null, written: [] };
      try {
        await mkdir(folder, { recursive: true });
        // Names come from the generator (module names checked against /^[A-Za-z0-9_]+\.v$/), never from the caller.
        for (const f of r.files) await writeFile(path.join(folder, path.basename(f.name)), f.text);
      } catch (e) {
        throw new ServiceError('internal', `${folder}: cannot write the files: ${(e as Error).message}`);
      }
      return { folder, written: r.files.map((f) => f.name) };
    },

    async 'job.start'(req, caller) {
      const who = requireCaller(caller, req.kind === 'simulate' ? 'a simulation job' : req.kind === 'bench' ? 'a bench session' : 'a replay');
      const m = machineOf(req.text, req.file);
      switch (req.kind) {
        case 'simulate': {
          const stim = fastStimulus(m, req.stimulus);
          if ('diagnostics' in stim) {
            // Stimulus problems keep their line and column: they come back as a failed job with diagnostics.
            const d = stim.diagnostics;
            return { job: jobs.start(who, async (j) => j.emit({ type: 'failed', error: 'the stimulus has errors', diagnostics: d })) };
          }
          return { job: jobs.start(who, (j) => simulateJob(j, m, stim.stimulus, stim.cycles)) };
        }
        case 'bench': {
          const serial = ctx.serial ?? null;
          return { job: jobs.start(who, (j) => benchJob(j, m, req, { captureDir, openSerial: serial ? (p, b) => serial.open(p, b) : null })) };
        }
        case 'replay':
          return { job: jobs.start(who, (j) => replayJob(j, m, req, captureDir)) };
      }
    },

    async 'job.cancel'({ job }, caller) {
      return { cancelled: jobs.cancel(requireCaller(caller, 'cancelling a job'), job) };
    },

    async 'bench.command'({ job, command }, caller) {
      const sent = jobs.command(requireCaller(caller, 'a board command'), job, command);
      if (sent === null) throw new ServiceError('not-found', `there is no running bench session ${job} on this connection`);
      return { sent };
    },

    async 'bench.ports'() {
      if (!ctx.serial) return { ports: [], note: 'serial ports are not available in this build; the emulated board works without one' };
      return ctx.serial.list();
    },

    async 'capture.list'() {
      let names: string[];
      try {
        names = (await readdir(captureDir)).filter((n) => /^[A-Za-z0-9][A-Za-z0-9._-]{0,120}\.twcap$/.test(n));
      } catch {
        return { folder: captureDir, captures: [] };
      }
      const captures = await Promise.all(
        names.map(async (name) => {
          const s = await stat(path.join(captureDir, name));
          return { name, bytes: s.size, modified: s.mtime.toISOString() };
        }),
      );
      captures.sort((a, b) => b.modified.localeCompare(a.modified));
      return { folder: captureDir, captures };
    },
  };
}

/**
 * The single entry of every shell: validates an untrusted message, runs the handler, and wraps the
 * outcome. Malformed messages get `bad-request` naming the field and the problem.
 */
export async function dispatch(handlers: Handlers, message: unknown, caller: CallerOrNull = null): Promise<ApiReply<unknown>> {
  const parsed = ApiRequestSchema.safeParse(message);
  if (!parsed.success) return { ok: false, error: { code: 'bad-request', message: describeIssues(parsed.error) } };
  const { method, params } = parsed.data;
  try {
    const handler = handlers[method] as (p: unknown, c: CallerOrNull) => Promise<unknown>;
    return { ok: true, value: await handler(params ?? {}, caller) };
  } catch (e) {
    if (e instanceof ServiceError) return { ok: false, error: { code: e.code, message: e.message } };
    return { ok: false, error: { code: 'internal', message: `internal fault in ${method}: ${e instanceof Error ? e.message : String(e)}` } };
  }
}
