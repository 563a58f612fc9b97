// `npm start` on a machine without Electron's binary: it must fall back to serve mode, print a
// tokenized 127.0.0.1 URL that serves the app, and stop cleanly. Also the Electron lookup itself.
import { spawn } from 'node:child_process';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { findElectron, openerFor } from '../main/electron/launch';

const root = path.join(__dirname, '..');

describe('finding Electron', () => {
  it('takes the binary path only when it exists', () => {
    expect(findElectron(() => process.execPath)).toBe(process.execPath);
    expect(findElectron(() => '/nonexistent/electron')).toBeNull();
    expect(findElectron(() => {
      throw new Error('Electron failed to install correctly');
    })).toBeNull();
    expect(findElectron(() => ({ not: 'a path' }))).toBeNull();
  });

  it('opens URLs with the platform opener', () => {
    expect(openerFor('linux', 'http://127.0.0.1:1/?t=x')).toEqual(['xdg-open', ['http://127.0.0.1:1/?t=x']]);
    expect(openerFor('darwin', 'u')).toEqual(['open', ['u']]);
    expect(openerFor('win32', 'u')[0]).toBe('cmd');
  });
});

describe('npm start without Electron', () => {
  it('serves the app on 127.0.0.1 with a token and stops on SIGTERM', async () => {
    // TWINSTEP_SHELL=browser makes the run the same on machines that do have Electron's binary.
    const child = spawn(path.join(root, 'node_modules', '.bin', 'tsx'), ['main/start.ts'], {
      cwd: root,
      env: { ...process.env, TWINSTEP_SHELL: 'browser', TWINSTEP_NO_BROWSER: '1' },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let out = '';
    let err = '';
    child.stdout.on('data', (d) => (out += d));
    child.stderr.on('data', (d) => (err += d));
    const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
    try {
      await expect.poll(() => out, { timeout: 90_000, interval: 200 }).toMatch(/http:\/\/127\.0\.0\.1:\d+\/\?t=\S+/);
      const url = out.match(/http:\/\/127\.0\.0\.1:\d+\/\?t=\S+/)![0];
      const page = await fetch(url);
      expect(page.status).toBe(200);
      expect(await page.text()).toContain('<div id="root"></div>');
      const bare = await fetch(url.replace(/\?t=.*$/, ''));
      expect(bare.status).toBe(403);
    } finally {
      child.kill('SIGTERM');
    }
    expect(await exited, `stderr: ${err}`).toBe(0);
  });
});
