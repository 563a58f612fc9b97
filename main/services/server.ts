// Serve mode: the app over HTTP and WebSocket on 127.0.0.1 only. A random per-run token guards the
// page, every API call and every WebSocket upgrade; Host and Origin checks stop DNS rebinding and foreign pages.
import { randomBytes, timingSafeEqual } from 'node:crypto';
import { createReadStream, existsSync } from 'node:fs';
import { stat } from 'node:fs/promises';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import { WebSocketServer, type WebSocket } from 'ws';
import { WsCallSchema } from '../../core/services/api';
import { contentSecurityPolicy } from './csp';
import { dispatch, type Handlers } from './handlers';
import type { Caller, JobManager } from './jobs';

export interface ServeOptions {
  handlers: Handlers;
  /** Folder holding the built renderer (index.html and assets/). */
  staticDir: string;
  /** 0 or absent: a random free port. */
  port?: number;
  /** Fixed token for tests; a fresh random one otherwise. */
  token?: string;
  /** The job manager the handlers use; jobs of a WebSocket that closes are cancelled. */
  jobs?: JobManager;
}

export interface RunningServer {
  port: number;
  token: string;
  /** The address to open, token included. */
  url: string;
  close(): Promise<void>;
}

const MAX_BODY_BYTES = 32 * 1024 * 1024;

const CONTENT_TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.ico': 'image/x-icon',
  '.woff2': 'font/woff2',
  '.json': 'application/json',
};

function sameToken(given: string | null | undefined, token: string): boolean {
  if (!given) return false;
  const a = Buffer.from(given);
  const b = Buffer.from(token);
  return a.length === b.length && timingSafeEqual(a, b);
}

function cookieValue(header: string | undefined, name: string): string | null {
  for (const part of (header ?? '').split(';')) {
    const eq = part.indexOf('=');
    if (eq > 0 && part.slice(0, eq).trim() === name) return part.slice(eq + 1).trim();
  }
  return null;
}

export async function startServer(opts: ServeOptions): Promise<RunningServer> {
  const token = opts.token ?? randomBytes(24).toString('base64url');
  const server = http.createServer();
  const wss = new WebSocketServer({ noServer: true, maxPayload: MAX_BODY_BYTES });
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(opts.port ?? 0, '127.0.0.1', () => resolve());
  });
  const port = (server.address() as AddressInfo).port;
  const hosts = new Set([`127.0.0.1:${port}`, `localhost:${port}`]);
  const origins = new Set([...hosts].map((h) => `http://${h}`));
  // The cookie name carries the port so two runs on one machine never share a credential.
  const cookieName = `twinstep_${port}`;
  const csp = contentSecurityPolicy([`ws://127.0.0.1:${port}`, `ws://localhost:${port}`]);
  const staticRoot = path.resolve(opts.staticDir);

  function baseHeaders(): Record<string, string> {
    return {
      'Content-Security-Policy': csp,
      'X-Content-Type-Options': 'nosniff',
      'Referrer-Policy': 'no-referrer',
      'Cross-Origin-Opener-Policy': 'same-origin',
      'Cross-Origin-Resource-Policy': 'same-origin',
      'Cache-Control': 'no-store',
    };
  }

  function refuse(res: http.ServerResponse, status: number, why: string): void {
    res.writeHead(status, { ...baseHeaders(), 'Content-Type': 'text/plain; charset=utf-8' });
    res.end(`Twinstep: ${why}\n`);
  }

  /** Host must name this server (stops DNS rebinding); Origin, when sent, must be this server. */
  function foreign(req: http.IncomingMessage, requireOrigin: boolean): string | null {
    if (!hosts.has(req.headers.host ?? '')) return `Host '${req.headers.host ?? ''}' is not this server`;
    const origin = req.headers.origin;
    if (origin === undefined) return requireOrigin ? 'an Origin header is required' : null;
    if (!origins.has(origin)) return `Origin '${origin}' may not use this server`;
    return null;
  }

  async function serveFile(res: http.ServerResponse, rel: string, extra: Record<string, string> = {}): Promise<void> {
    const file = path.resolve(staticRoot, '.' + path.posix.normalize('/' + rel));
    if (!file.startsWith(staticRoot + path.sep) || !existsSync(file) || !(await stat(file)).isFile()) {
      refuse(res, 404, `no such file: /${rel}`);
      return;
    }
    res.writeHead(200, { ...baseHeaders(), ...extra, 'Content-Type': CONTENT_TYPES[path.extname(file)] ?? 'application/octet-stream' });
    createReadStream(file).pipe(res);
  }

  function readBody(req: http.IncomingMessage): Promise<string | null> {
    return new Promise((resolve, reject) => {
      const chunks: Buffer[] = [];
      let size = 0;
      req.on('data', (c: Buffer) => {
        size += c.length;
        if (size > MAX_BODY_BYTES) {
          resolve(null);
          req.destroy();
        } else chunks.push(c);
      });
      req.on('end', () => resolve(Buffer.concat(chunks).toString('utf8')));
      req.on('error', reject);
    });
  }

  async function handleApi(req: http.IncomingMessage, res: http.ServerResponse): Promise<void> {
    if (req.method !== 'POST') return refuse(res, 405, 'the API takes POST');
    if (!sameToken(req.headers['x-twinstep-token'] as string | undefined, token)) return refuse(res, 403, 'the API needs the token of this run');
    if (!(req.headers['content-type'] ?? '').startsWith('application/json')) return refuse(res, 415, 'the API takes application/json');
    const body = await readBody(req);
    if (body === null) return refuse(res, 413, `request body over ${MAX_BODY_BYTES} bytes`);
    let message: unknown;
    try {
      message = JSON.parse(body);
    } catch (e) {
      res.writeHead(400, { ...baseHeaders(), 'Content-Type': 'application/json' });
      res.end(JSON.stringify({ ok: false, error: { code: 'bad-request', message: `the body is not JSON: ${(e as Error).message}` } }));
      return;
    }
    const reply = await dispatch(opts.handlers, message);
    res.writeHead(reply.ok || reply.error.code !== 'bad-request' ? 200 : 400, { ...baseHeaders(), 'Content-Type': 'application/json' });
    res.end(JSON.stringify(reply));
  }

  server.on('request', (req: http.IncomingMessage, res: http.ServerResponse) => {
    const url = new URL(req.url ?? '/', 'http://127.0.0.1');
    const problem = foreign(req, false);
    if (problem) return refuse(res, 403, problem);
    if (url.pathname === '/api') {
      handleApi(req, res).catch((e) => refuse(res, 500, `internal fault: ${(e as Error).message}`));
      return;
    }
    if (req.method !== 'GET' && req.method !== 'HEAD') return refuse(res, 405, 'only GET here');
    if (url.pathname === '/' || url.pathname === '/index.html') {
      if (!sameToken(url.searchParams.get('t'), token)) return refuse(res, 403, 'open the address printed by `twinstep serve`, token included');
      // Assets are fetched without the query string; an HttpOnly same-site cookie vouches for them.
      void serveFile(res, 'index.html', { 'Set-Cookie': `${cookieName}=${token}; HttpOnly; SameSite=Strict; Path=/` });
      return;
    }
    if (!sameToken(cookieValue(req.headers.cookie, cookieName), token) && !sameToken(url.searchParams.get('t'), token)) {
      return refuse(res, 403, 'this file needs the token of this run');
    }
    void serveFile(res, decodeURIComponent(url.pathname.slice(1)));
  });

  server.on('upgrade', (req: http.IncomingMessage, socket, head) => {
    const url = new URL(req.url ?? '/', 'http://127.0.0.1');
    const problem = url.pathname !== '/ws' ? 'no WebSocket here' : (foreign(req, true) ?? (sameToken(url.searchParams.get('t'), token) ? null : 'the WebSocket needs the token of this run'));
    if (problem) {
      socket.end(`HTTP/1.1 403 Forbidden\r\nContent-Type: text/plain\r\nConnection: close\r\n\r\nTwinstep: ${problem}\n`);
      return;
    }
    wss.handleUpgrade(req, socket, head, (ws) => wss.emit('connection', ws, req));
  });

  let connections = 0;
  wss.on('connection', (ws: WebSocket) => {
    // Each WebSocket is one caller: job events go back over it as `{ push }` frames.
    const caller: Caller = {
      id: `ws-${++connections}`,
      emit: (event) => {
        if (ws.readyState === ws.OPEN) ws.send(JSON.stringify({ push: event }));
      },
      backlog: () => ws.bufferedAmount,
    };
    ws.on('close', () => opts.jobs?.dropCaller(caller));
    ws.on('message', (data, isBinary) => {
      let frame: unknown;
      try {
        frame = isBinary ? undefined : JSON.parse(data.toString());
      } catch {
        frame = undefined;
      }
      const call = WsCallSchema.safeParse(frame);
      if (!call.success) {
        ws.close(1008, 'malformed frame: expected {"id": N, "call": {...}}');
        return;
      }
      void dispatch(opts.handlers, call.data.call, caller).then((reply) => {
        if (ws.readyState === ws.OPEN) ws.send(JSON.stringify({ id: call.data.id, reply }));
      });
    });
  });

  return {
    port,
    token,
    url: `http://127.0.0.1:${port}/?t=${token}`,
    close: () =>
      new Promise<void>((resolve) => {
        for (const c of wss.clients) c.terminate();
        wss.close();
        server.closeAllConnections();
        server.close(() => resolve());
      }),
  };
}
