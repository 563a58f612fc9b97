// Serve mode's guards, tested over real sockets on 127.0.0.1: the per-run token on the page, the
// API and the WebSocket; Host and Origin checks; the CSP header; and a good call that works.
import { mkdtempSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import http from 'node:http';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { parsePort, run as serveCommand } from '../main/commands/serve';
import { JobEventSchema, type JobEvent } from '../core/services/api';
import { createHandlers } from '../main/services/handlers';
import { JobManager } from '../main/services/jobs';
import { startServer, type RunningServer } from '../main/services/server';

let server: RunningServer;
const jobs = new JobManager();
const TOKEN = 'test-token-0123456789abcdef';

beforeAll(async () => {
  const dir = mkdtempSync(path.join(tmpdir(), 'twinstep-serve-'));
  mkdirSync(path.join(dir, 'assets'));
  writeFileSync(path.join(dir, 'index.html'), '<!doctype html><title>t</title>');
  writeFileSync(path.join(dir, 'assets', 'app.js'), 'console.log(1)');
  writeFileSync(path.join(dir, '..', 'twinstep-secret.txt'), 'outside');
  const handlers = createHandlers({ shell: 'serve', version: 'test', demoDir: path.join(__dirname, '..', 'fixtures'), captureDir: path.join(dir, 'captures'), jobs });
  server = await startServer({ handlers, staticDir: dir, token: TOKEN, jobs });
});
afterAll(() => server.close());

interface Res {
  status: number;
  headers: http.IncomingHttpHeaders;
  body: string;
}

/** A raw request, so tests can send any Host and Origin (fetch would not let them). */
function request(opts: { path: string; method?: string; headers?: Record<string, string>; body?: string }): Promise<Res> {
  return new Promise((resolve, reject) => {
    const req = http.request({ host: '127.0.0.1', port: server.port, path: opts.path, method: opts.method ?? 'GET', headers: { host: `127.0.0.1:${server.port}`, ...opts.headers } }, (res) => {
      let body = '';
      res.setEncoding('utf8');
      res.on('data', (c) => (body += c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body }));
    });
    req.on('error', reject);
    req.end(opts.body);
  });
}

const apiCall = (message: unknown, headers: Record<string, string> = {}) =>
  request({ path: '/api', method: 'POST', headers: { 'content-type': 'application/json', 'x-twinstep-token': TOKEN, ...headers }, body: JSON.stringify(message) });

describe('the page', () => {
  it('is refused without the token (403)', async () => {
    const r = await request({ path: '/' });
    expect(r.status).toBe(403);
    expect(r.body).toMatch(/token/);
  });

  it('is refused with a wrong token', async () => {
    expect((await request({ path: '/?t=wrong' })).status).toBe(403);
  });

  it('is served with the token, with a strict CSP and a same-site cookie for the assets', async () => {
    const r = await request({ path: `/?t=${TOKEN}` });
    expect(r.status).toBe(200);
    expect(r.body).toContain('<title>t</title>');
    const csp = String(r.headers['content-security-policy']);
    expect(csp).toContain("default-src 'none'");
    expect(csp).toContain("script-src 'self'");
    expect(csp).toContain("frame-ancestors 'none'");
    expect(r.headers['referrer-policy']).toBe('no-referrer');
    expect(String(r.headers['set-cookie'])).toMatch(new RegExp(`twinstep_${server.port}=${TOKEN}; HttpOnly; SameSite=Strict`));
  });

  it('serves assets only with the cookie of this run', async () => {
    expect((await request({ path: '/assets/app.js' })).status).toBe(403);
    const r = await request({ path: '/assets/app.js', headers: { cookie: `twinstep_${server.port}=${TOKEN}` } });
    expect(r.status).toBe(200);
    expect(r.headers['content-type']).toMatch(/^text\/javascript/);
  });

  it('never serves files outside the renderer folder', async () => {
    const r = await request({ path: '/assets/../../twinstep-secret.txt', headers: { cookie: `twinstep_${server.port}=${TOKEN}` } });
    expect(r.status).toBe(404);
    const encoded = await request({ path: '/%2e%2e/twinstep-secret.txt', headers: { cookie: `twinstep_${server.port}=${TOKEN}` } });
    expect(encoded.status).toBe(404);
    expect(encoded.body).not.toContain('outside');
  });

  it('refuses a foreign Host header (DNS rebinding)', async () => {
    const r = await request({ path: `/?t=${TOKEN}`, headers: { host: `attacker.example:${server.port}` } });
    expect(r.status).toBe(403);
    expect(r.body).toMatch(/Host/);
  });

  it('accepts localhost as the Host', async () => {
    expect((await request({ path: `/?t=${TOKEN}`, headers: { host: `localhost:${server.port}` } })).status).toBe(200);
  });
});

describe('the HTTP API', () => {
  it('answers a good call', async () => {
    const r = await apiCall({ method: 'files.listDemos' }, { origin: `http://127.0.0.1:${server.port}` });
    expect(r.status).toBe(200);
    const reply = JSON.parse(r.body);
    expect(reply.ok).toBe(true);
    expect(reply.value.demos.map((d: { id: string }) => d.id)).toContain('tank_dosing');
  });

  it('refuses a call without the token (403)', async () => {
    const r = await request({ path: '/api', method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"method":"files.listDemos"}' });
    expect(r.status).toBe(403);
  });

  it('refuses a call with the token in the URL only (it must come in the header)', async () => {
    const r = await request({ path: `/api?t=${TOKEN}`, method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"method":"files.listDemos"}' });
    expect(r.status).toBe(403);
  });

  it('refuses a foreign Origin even with the token', async () => {
    const r = await apiCall({ method: 'files.listDemos' }, { origin: 'http://attacker.example' });
    expect(r.status).toBe(403);
    expect(r.body).toMatch(/Origin/);
  });

  it('refuses the same host on another port as Origin', async () => {
    const r = await apiCall({ method: 'files.listDemos' }, { origin: `http://127.0.0.1:${server.port + 1}` });
    expect(r.status).toBe(403);
  });

  it('answers malformed JSON and malformed messages with 400 and a reason', async () => {
    const bad = await request({ path: '/api', method: 'POST', headers: { 'content-type': 'application/json', 'x-twinstep-token': TOKEN }, body: '{"method":' });
    expect(bad.status).toBe(400);
    expect(JSON.parse(bad.body).error.code).toBe('bad-request');
    const wrong = await apiCall({ method: 'design.check', params: { text: 5 } });
    expect(wrong.status).toBe(400);
    expect(JSON.parse(wrong.body).error.message).toContain('params.text');
  });

  it('refuses other content types and methods', async () => {
    expect((await request({ path: '/api', method: 'POST', headers: { 'content-type': 'text/plain', 'x-twinstep-token': TOKEN }, body: '{}' })).status).toBe(415);
    expect((await request({ path: '/api', headers: { 'x-twinstep-token': TOKEN } })).status).toBe(405);
  });
});

describe('the WebSocket', () => {
  const wsUrl = (t: string) => `ws://127.0.0.1:${server.port}/ws?t=${t}`;

  /** Resolves with the HTTP status of a refused upgrade, or 101 when it opened. */
  function upgradeStatus(url: string, origin?: string): Promise<number> {
    return new Promise((resolve) => {
      const ws = new WebSocket(url, origin === undefined ? {} : { origin });
      ws.on('open', () => {
        ws.close();
        resolve(101);
      });
      ws.on('unexpected-response', (_req, res) => resolve(res.statusCode ?? 0));
      ws.on('error', () => resolve(-1));
    });
  }

  it('refuses an upgrade without the token', async () => {
    expect(await upgradeStatus(wsUrl(''), `http://127.0.0.1:${server.port}`)).toBe(403);
  });

  it('refuses an upgrade from a foreign Origin', async () => {
    expect(await upgradeStatus(wsUrl(TOKEN), 'http://attacker.example')).toBe(403);
  });

  it('refuses an upgrade without an Origin', async () => {
    expect(await upgradeStatus(wsUrl(TOKEN))).toBe(403);
  });

  it('carries calls and replies matched by id', async () => {
    const ws = new WebSocket(wsUrl(TOKEN), { origin: `http://localhost:${server.port}` });
    await new Promise((r) => ws.once('open', r));
    const replies = new Map<number, { ok: boolean; value?: { name?: string } }>();
    const done = new Promise<void>((resolve) =>
      ws.on('message', (data) => {
        const frame = JSON.parse(String(data));
        replies.set(frame.id, frame.reply);
        if (replies.size === 2) resolve();
      }),
    );
    ws.send(JSON.stringify({ id: 1, call: { method: 'app.info' } }));
    ws.send(JSON.stringify({ id: 2, call: { method: 'nope' } }));
    await done;
    expect(replies.get(1)).toMatchObject({ ok: true, value: { name: 'Twinstep' } });
    expect(replies.get(2)).toMatchObject({ ok: false, error: { code: 'bad-request' } });
    ws.close();
  });

  it('closes on a frame that is not a call', async () => {
    const ws = new WebSocket(wsUrl(TOKEN), { origin: `http://127.0.0.1:${server.port}` });
    await new Promise((r) => ws.once('open', r));
    const closed = new Promise<number>((r) => ws.once('close', (code) => r(code)));
    ws.send('this is not json');
    expect(await closed).toBe(1008);
  });
});

describe('job events over the WebSocket', () => {
  const demo = readFileSync(path.join(__dirname, '..', 'fixtures', 'tank_dosing.tsm'), 'utf8');
  /** Opens a socket that collects replies by id and pushed events in order. */
  async function open() {
    const ws = new WebSocket(`ws://127.0.0.1:${server.port}/ws?t=${TOKEN}`, { origin: `http://127.0.0.1:${server.port}` });
    await new Promise((r) => ws.once('open', r));
    const replies = new Map<number, { ok: boolean; value?: { job: number } }>();
    const pushed: JobEvent[] = [];
    ws.on('message', (data) => {
      const f = JSON.parse(data.toString());
      if (f.push) pushed.push(JobEventSchema.parse(f.push));
      else replies.set(f.id, f.reply);
    });
    const reply = async (id: number) => {
      await expect.poll(() => replies.has(id), { timeout: 10_000 }).toBe(true);
      return replies.get(id)!;
    };
    return { ws, pushed, reply };
  }

  it('pushes the progress and chunks of a simulation to the socket that started it, and only to it', async () => {
    const a = await open();
    const b = await open();
    a.ws.send(JSON.stringify({ id: 1, call: { method: 'job.start', params: { kind: 'simulate', text: demo, stimulus: { kind: 'random', cycles: 300_000, seed: 2 } } } }));
    const r = await a.reply(1);
    expect(r.ok).toBe(true);
    await expect.poll(() => a.pushed.some((e) => e.type === 'done'), { timeout: 20_000 }).toBe(true);
    expect(a.pushed.every((e) => e.job === r.value!.job)).toBe(true);
    expect(a.pushed.filter((e) => e.type === 'sim-chunk').length).toBe(6);
    expect(a.pushed.filter((e) => e.type === 'progress').map((e) => e.type === 'progress' && e.done)).toEqual([50_000, 100_000, 150_000, 200_000, 250_000, 300_000]);
    expect(b.pushed).toEqual([]);
    a.ws.close();
    b.ws.close();
  });

  it('stops a bench session when its socket closes', async () => {
    const a = await open();
    a.ws.send(
      JSON.stringify({
        id: 1,
        call: { method: 'job.start', params: { kind: 'bench', text: demo, encoding: 'binary', link: { kind: 'emulator', faults: [], seed: 1, baud: 115200 }, record: false, hostInputs: null, safetyAcknowledged: true } },
      }),
    );
    expect((await a.reply(1)).ok).toBe(true);
    await expect.poll(() => a.pushed.some((e) => e.type === 'session-delta' && e.counters.cycleFrames > 0), { timeout: 10_000 }).toBe(true);
    expect(jobs.active).toBe(1);
    a.ws.close();
    await expect.poll(() => jobs.active, { timeout: 5_000 }).toBe(0);
  });
});

describe('twinstep serve options', () => {
  it('parses --port and names a bad one', () => {
    expect(parsePort(undefined)).toEqual({ port: 0 });
    expect(parsePort('8080')).toEqual({ port: 8080 });
    expect(parsePort('70000')).toEqual({ problem: "--port: '70000' is not a port number (1-65535)" });
    expect(parsePort('http')).toMatchObject({ problem: expect.stringContaining("'http'") });
  });

  it('exits with the usage code on a bad option, before starting anything', async () => {
    let err = '';
    const code = await serveCommand(['--port', 'abc'], { out: () => {}, err: (t) => (err += t), cwd: process.cwd() });
    expect(code).toBe(2);
    expect(err).toContain("--port: 'abc' is not a port number");
    expect(err).toContain('usage: twinstep serve');
  });

  it('reports a port in use clearly', async () => {
    let err = '';
    const code = await serveCommand(['--port', String(server.port)], { out: () => {}, err: (t) => (err += t), cwd: process.cwd() });
    expect(code).toBe(1);
    expect(err).toContain(`port ${server.port} is in use`);
  });
});
