// The Electron IPC handler as a plain function: checks that the message comes from the app's own
// page, then hands it to the shared dispatcher, which validates it with zod before any handler runs.
import type { ApiReply } from '../../core/services/api';
import { dispatch, type Handlers } from '../services/handlers';
import type { Caller, JobManager } from '../services/jobs';
import { IPC_EVENT_CHANNEL } from './channel';

/** The parts of Electron's WebContents the handler uses to push job events back. */
export interface SenderLike {
  id: number;
  send(channel: string, payload: unknown): void;
  isDestroyed?(): boolean;
  once?(event: 'destroyed', listener: () => void): unknown;
}

/** The parts of Electron's IpcMainInvokeEvent this handler reads (so tests need no Electron). */
export interface InvokeEventLike {
  senderFrame?: { url: string } | null;
  sender?: SenderLike;
}

/** True when a frame URL is the bundled renderer page (file:// URL of dist/renderer/index.html). */
export function isAppPage(frameUrl: string, indexUrl: string): boolean {
  try {
    const a = new URL(frameUrl);
    const b = new URL(indexUrl);
    return a.protocol === b.protocol && a.host === b.host && a.pathname === b.pathname;
  } catch {
    return false;
  }
}

export function createIpcHandler(handlers: Handlers, indexUrl: string, jobs?: JobManager): (event: InvokeEventLike, message: unknown) => Promise<ApiReply<unknown>> {
  // One caller per window: its jobs push events to it and stop when the window goes away.
  const callers = new Map<number, Caller>();
  const callerOf = (sender: SenderLike | undefined): Caller | null => {
    if (!sender) return null;
    let c = callers.get(sender.id);
    if (!c) {
      c = {
        id: `window-${sender.id}`,
        emit: (event) => {
          if (!sender.isDestroyed?.()) sender.send(IPC_EVENT_CHANNEL, event);
        },
      };
      callers.set(sender.id, c);
      const made = c;
      sender.once?.('destroyed', () => {
        callers.delete(sender.id);
        jobs?.dropCaller(made);
      });
    }
    return c;
  };
  return async (event, message) => {
    const url = event.senderFrame?.url ?? '';
    if (!isAppPage(url, indexUrl)) return { ok: false, error: { code: 'bad-request', message: `calls are accepted only from the Twinstep page, not from '${url || 'an unknown frame'}'` } };
    return dispatch(handlers, message, callerOf(event.sender));
  };
}
