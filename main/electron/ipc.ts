// The Electron IPC handler as a plain function: checks that the message comes from the app's own
// page, then hands it to the shared dispatcher, which validates it with zod before any handler runs.
import type { ApiReply } from '../../core/services/api';
import { dispatch, type Handlers } from '../services/handlers';

/** The parts of Electron's IpcMainInvokeEvent this handler reads (so tests need no Electron). */
export interface InvokeEventLike {
  senderFrame?: { url: string } | null;
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

export function createIpcHandler(handlers: Handlers, indexUrl: string): (event: InvokeEventLike, message: unknown) => Promise<ApiReply<unknown>> {
  return async (event, message) => {
    const url = event.senderFrame?.url ?? '';
    if (!isAppPage(url, indexUrl)) return { ok: false, error: { code: 'bad-request', message: `calls are accepted only from the Twinstep page, not from '${url || 'an unknown frame'}'` } };
    return dispatch(handlers, message);
  };
}
