// The Electron IPC handler as a plain function: only the app's own page may call, and every
// message still goes through zod validation in the shared dispatcher.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { describe, expect, it } from 'vitest';
import { createIpcHandler, isAppPage } from '../main/electron/ipc';
import { IPC_CHANNEL, IPC_EVENT_CHANNEL } from '../main/electron/channel';
import { JobManager } from '../main/services/jobs';
import { createHandlers } from '../main/services/handlers';

const indexUrl = pathToFileURL('/opt/Twinstep/resources/app/dist/renderer/index.html').href;
const handler = createIpcHandler(createHandlers({ shell: 'electron', version: 'test', demoDir: path.join(__dirname, '..', 'fixtures') }), indexUrl);
const fromApp = { senderFrame: { url: indexUrl + '#design' } };

describe('Electron IPC', () => {
  it('answers a good call from the app page', async () => {
    const reply = await handler(fromApp, { method: 'app.info' });
    expect(reply).toMatchObject({ ok: true, value: { shell: 'electron' } });
  });

  it.each([
    ['a web page', 'https://example.org/'],
    ['another local file', pathToFileURL('/tmp/evil/index.html').href],
    ['no frame', ''],
  ])('refuses a call from %s', async (_what, url) => {
    const reply = await handler({ senderFrame: url ? { url } : null }, { method: 'app.info' });
    expect(reply).toMatchObject({ ok: false, error: { code: 'bad-request' } });
    expect(!reply.ok && reply.error.message).toMatch(/only from the Twinstep page/);
  });

  it.each([
    ['undefined', undefined],
    ['a number', 7],
    ['a method with the wrong params', { method: 'files.readDemo', params: { id: 3 } }],
    ['a prototype-pollution attempt', JSON.parse('{"method":"design.check","params":{"text":"x","__proto__":{"admin":true}}}')],
  ])('refuses a malformed message: %s', async (_what, message) => {
    const reply = await handler(fromApp, message);
    expect(reply.ok).toBe(false);
    if (!reply.ok) expect(reply.error.code).toBe('bad-request');
  });

  it('pushes job events to the window that started the job, and stops its jobs when the window goes away', async () => {
    const jobs = new JobManager();
    const h = createIpcHandler(createHandlers({ shell: 'electron', version: 'test', demoDir: path.join(__dirname, '..', 'fixtures'), jobs }), indexUrl, jobs);
    const sent: { channel: string; payload: { type: string; job: number } }[] = [];
    let destroyed: (() => void) | null = null;
    const sender = { id: 7, send: (channel: string, payload: unknown) => sent.push({ channel, payload: payload as { type: string; job: number } }), isDestroyed: () => false, once: (_e: 'destroyed', l: () => void) => (destroyed = l) };
    const demo = readFileSync(path.join(__dirname, '..', 'fixtures', 'tank_dosing.tsm'), 'utf8');
    const bench = { kind: 'bench', text: demo, encoding: 'binary', link: { kind: 'emulator', faults: [], seed: 1, baud: 115200 }, record: false, hostInputs: null, safetyAcknowledged: true };
    const reply = await h({ ...fromApp, sender }, { method: 'job.start', params: bench });
    expect(reply).toMatchObject({ ok: true, value: { job: expect.any(Number) } });
    await expect.poll(() => sent.some((s) => s.payload.type === 'session-delta'), { timeout: 10_000 }).toBe(true);
    expect(sent.every((s) => s.channel === IPC_EVENT_CHANNEL)).toBe(true);
    expect(jobs.active).toBe(1);
    destroyed!();
    await expect.poll(() => jobs.active, { timeout: 5_000 }).toBe(0);
    // Without a sender (no window to push to) a job cannot start.
    expect(await h(fromApp, { method: 'job.start', params: bench })).toMatchObject({ ok: false, error: { code: 'unavailable' } });
  });

  it('matches the page by scheme, host and path only', () => {
    expect(isAppPage(indexUrl + '?x=1', indexUrl)).toBe(true);
    expect(isAppPage('not a url', indexUrl)).toBe(false);
    expect(IPC_CHANNEL).toBe('twinstep');
  });
});

describe('the desktop window', () => {
  it('keeps the page isolated: context isolation, sandbox, no Node, no webviews', async () => {
    const { windowOptions } = await import('../main/electron/window');
    const w = windowOptions('/app/dist/electron/preload.cjs').webPreferences;
    expect(w).toMatchObject({ contextIsolation: true, sandbox: true, nodeIntegration: false, nodeIntegrationInWorker: false, webSecurity: true, webviewTag: false, allowRunningInsecureContent: false });
    expect(w.preload).toBe('/app/dist/electron/preload.cjs');
  });

  it('applies the same strict CSP as serve mode', async () => {
    const { contentSecurityPolicy } = await import('../main/services/csp');
    const csp = contentSecurityPolicy();
    expect(csp).toContain("default-src 'none'");
    expect(csp).toContain("script-src 'self'");
    expect(csp).not.toContain('unsafe-inline');
    expect(csp).not.toContain('unsafe-eval');
  });
});
