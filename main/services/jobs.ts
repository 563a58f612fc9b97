// Long work as jobs: each runs in the main process, reports progress and results as events pushed to the
// connection that started it (WebSocket frames in serve mode, IPC messages in Electron), and can be cancelled.
import type { BenchCommand, JobEvent } from '../../core/services/api';

/** Distributive Omit, so each event kind keeps its own fields. */
type DistributiveOmit<T, K extends keyof T> = T extends unknown ? Omit<T, K> : never;
export type JobEventBody = DistributiveOmit<JobEvent, 'job'>;

/** One connection that can receive pushed events: a WebSocket, or an Electron window's web contents. */
export interface Caller {
  readonly id: string;
  emit(event: JobEvent): void;
  /** Bytes sent but not yet taken by the connection; jobs that produce faster than it drains wait. */
  backlog?(): number;
}

/** A job producing big events (simulation chunks) waits while more than this is queued for its caller. */
const MAX_BACKLOG = 4 * 1024 * 1024;

export interface JobContext {
  readonly id: number;
  readonly signal: AbortSignal;
  emit(event: JobEventBody): void;
  /** Bench sessions take board commands while they run; other jobs leave this unset. */
  onCommand(handler: (cmd: BenchCommand) => string): void;
  /** Resolves once the caller's connection has taken most of what was sent (or the job is cancelled). */
  drained(): Promise<void>;
}

interface Running {
  caller: Caller;
  abort: AbortController;
  command: ((cmd: BenchCommand) => string) | null;
}

/** Lets the event loop run (incoming cancel calls, socket writes) between slices of a job's work. */
export function breathe(): Promise<void> {
  return new Promise((resolve) => setImmediate(resolve));
}

export class JobManager {
  private next = 1;
  private readonly running = new Map<number, Running>();

  /** Starts `work`; its failure becomes a `failed` event, a cancellation a `cancelled` event. */
  start(caller: Caller, work: (ctx: JobContext) => Promise<void>): number {
    const id = this.next++;
    const entry: Running = { caller, abort: new AbortController(), command: null };
    this.running.set(id, entry);
    let ended = false;
    const emit = (e: JobEventBody) => {
      // Exactly one final event per job: done, failed or cancelled.
      if (ended) return;
      if (e.type === 'done' || e.type === 'failed' || e.type === 'cancelled') ended = true;
      try {
        caller.emit({ ...e, job: id } as JobEvent);
      } catch {
        // The connection went away; the job notices through its abort signal.
      }
    };
    const drained = async () => {
      while (!entry.abort.signal.aborted && (caller.backlog?.() ?? 0) > MAX_BACKLOG) await new Promise((r) => setTimeout(r, 10));
    };
    const ctx: JobContext = { id, signal: entry.abort.signal, emit, onCommand: (h) => (entry.command = h), drained };
    // Start on the next turn, so the caller has the job id before the first event arrives.
    setImmediate(() => {
      work(ctx).then(
        () => emit(entry.abort.signal.aborted ? { type: 'cancelled' } : { type: 'done', message: 'finished' }),
        (e: unknown) => emit(entry.abort.signal.aborted ? { type: 'cancelled' } : { type: 'failed', error: e instanceof Error ? e.message : String(e), diagnostics: [] }),
      ).finally(() => this.running.delete(id));
    });
    return id;
  }

  /** Cancels a job of this caller; false when there is no such running job. */
  cancel(caller: Caller, id: number): boolean {
    const j = this.running.get(id);
    if (!j || j.caller.id !== caller.id) return false;
    j.abort.abort();
    return true;
  }

  /** Hands a board command to a running bench session of this caller; null when there is none. */
  command(caller: Caller, id: number, cmd: BenchCommand): string | null {
    const j = this.running.get(id);
    if (!j || j.caller.id !== caller.id || !j.command) return null;
    return j.command(cmd);
  }

  /** A connection closed: stop everything it started (ports are released, captures closed). */
  dropCaller(caller: Caller): void {
    for (const j of this.running.values()) if (j.caller.id === caller.id) j.abort.abort();
  }

  get active(): number {
    return this.running.size;
  }
}
