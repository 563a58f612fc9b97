// `npm start`: the desktop app when Electron's binary is installed, otherwise serve mode in the
// default browser. Either way the bundled demo design is open on the Design screen.
import { spawn } from 'node:child_process';
import path from 'node:path';
import { startServe } from './commands/serve';
import { buildElectron } from './electron/build';
import { findElectron, openInBrowser } from './electron/launch';
import { appRoot } from './services/paths';
import { ensureRendererBuilt } from './services/renderer-build';

async function runElectron(electron: string): Promise<number> {
  const root = appRoot();
  await ensureRendererBuilt(root, (l) => process.stderr.write(l));
  await buildElectron(root);
  const child = spawn(electron, [path.join(root, 'dist', 'electron', 'main.mjs')], { stdio: 'inherit' });
  return new Promise((resolve) => {
    child.on('exit', (code) => resolve(code ?? 0));
    child.on('error', (e) => {
      process.stderr.write(`twinstep: Electron could not start (${e.message})\n`);
      resolve(1);
    });
  });
}

async function runBrowser(): Promise<number> {
  if (process.env.TWINSTEP_SHELL !== 'browser') process.stdout.write("Electron's binary is not installed here, so Twinstep opens in your browser instead.\n");
  const server = await startServe(0, { err: (t) => process.stderr.write(t) });
  process.stdout.write(`Twinstep is serving on 127.0.0.1 only. Open:\n  ${server.url}\nStop with Ctrl-C.\n`);
  // Tests and headless machines set TWINSTEP_NO_BROWSER to skip launching a browser.
  if (!process.env.TWINSTEP_NO_BROWSER) openInBrowser(server.url);
  await new Promise<void>((resolve) => {
    process.once('SIGINT', () => resolve());
    process.once('SIGTERM', () => resolve());
  });
  await server.close();
  return 0;
}

// TWINSTEP_SHELL=browser asks for the browser even where Electron is installed.
const electron = process.env.TWINSTEP_SHELL === 'browser' ? null : findElectron();
(electron ? runElectron(electron) : runBrowser()).then(
  (code) => process.exit(code),
  (e: unknown) => {
    process.stderr.write(`twinstep: could not start: ${e instanceof Error ? e.message : String(e)}\n`);
    process.exit(1);
  },
);
