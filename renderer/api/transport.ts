// Picks how the renderer reaches the service API: the Electron preload bridge when present, else
// the serve-mode WebSocket (falling back to HTTP POST) with this run's token taken from the page URL.
// The first two also carry job events pushed by the service; plain HTTP cannot.
import type { ApiReply, TwinstepBridge } from '../../core/services/api';

export interface Transport {
  kind: 'electron' | 'websocket' | 'http';
  send(request: unknown): Promise<unknown>;
  /** Raw pushed events (validated by the client); returns an unsubscribe function. */
  listen(listener: (event: unknown) => void): () => void;
  /** Whether pushed events can arrive (false once the WebSocket could not open). */
  canPush(): Promise<boolean>;
}

declare global {
  interface Window {
    twinstep?: TwinstepBridge;
  }
}

function httpTransport(token: string): Transport {
  return {
    kind: 'http',
    async send(request) {
      const res = await fetch('./api', { method: 'POST', headers: { 'content-type': 'application/json', 'x-twinstep-token': token }, body: JSON.stringify(request) });
      const type = res.headers.get('content-type') ?? '';
      if (!type.startsWith('application/json')) return { ok: false, error: { code: 'internal', message: `the server answered ${res.status}: ${(await res.text()).trim()}` } };
      return res.json();
    },
    listen: () => () => {},
    canPush: async () => false,
  };
}

/** One WebSocket for all calls; replies are matched by id, pushes go to listeners. Falls back to HTTP if it cannot open. */
function socketTransport(token: string): Transport {
  const http = httpTransport(token);
  const pending = new Map<number, (reply: unknown) => void>();
  const listeners = new Set<(event: unknown) => void>();
  let nextId = 1;
  let socket: Promise<WebSocket | null> | null = null;

  const open = (): Promise<WebSocket | null> =>
    (socket ??= new Promise((resolve) => {
      const url = new URL('./ws', location.href);
      url.protocol = location.protocol === 'https:' ? 'wss:' : 'ws:';
      url.search = `?t=${encodeURIComponent(token)}`;
      const ws = new WebSocket(url);
      ws.onopen = () => resolve(ws);
      ws.onerror = () => resolve(null);
      ws.onclose = (ev) => {
        for (const [id, done] of pending) {
          pending.delete(id);
          done({ ok: false, error: { code: 'internal', message: `connection to the app server closed (${ev.code}${ev.reason ? `: ${ev.reason}` : ''})` } });
        }
        socket = null;
      };
      ws.onmessage = (ev) => {
        let frame: { id?: unknown; reply?: unknown; push?: unknown };
        try {
          frame = JSON.parse(String(ev.data));
        } catch {
          return;
        }
        if (frame.push !== undefined) {
          for (const l of listeners) l(frame.push);
          return;
        }
        const done = typeof frame.id === 'number' ? pending.get(frame.id) : undefined;
        if (done) {
          pending.delete(frame.id as number);
          done(frame.reply);
        }
      };
    }));

  return {
    kind: 'websocket',
    async send(request) {
      const ws = await open();
      if (!ws || ws.readyState !== WebSocket.OPEN) return http.send(request);
      const id = nextId++;
      return new Promise((resolve) => {
        pending.set(id, resolve);
        ws.send(JSON.stringify({ id, call: request }));
      });
    },
    listen(listener) {
      listeners.add(listener);
      return () => void listeners.delete(listener);
    },
    async canPush() {
      const ws = await open();
      return ws !== null && ws.readyState === WebSocket.OPEN;
    },
  };
}

export function pickTransport(): Transport {
  const bridge = window.twinstep;
  if (bridge && typeof bridge.call === 'function') {
    return {
      kind: 'electron',
      send: (r) => bridge.call(r) as Promise<ApiReply<unknown>>,
      listen: (l) => (typeof bridge.onEvent === 'function' ? bridge.onEvent(l) : () => {}),
      canPush: async () => typeof bridge.onEvent === 'function',
    };
  }
  const token = new URLSearchParams(location.search).get('t') ?? '';
  return socketTransport(token);
}
