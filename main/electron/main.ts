// Electron main process: one window on the bundled renderer, locked down (context isolation,
// sandbox, no Node in the page, strict CSP, no navigation or new windows), and the service API over one IPC channel.
import { app, BrowserWindow, dialog, ipcMain, session, type WebContents } from 'electron';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { contentSecurityPolicy } from '../services/csp';
import { createHandlers } from '../services/handlers';
import { JobManager } from '../services/jobs';
import { APP_VERSION, appRoot, captureDir, demoDir, rendererDist } from '../services/paths';
import { loadSerial } from '../services/serial-adapter';
import { IPC_CHANNEL } from './channel';
import { createIpcHandler } from './ipc';
import { windowOptions } from './window';

const here = path.dirname(fileURLToPath(import.meta.url));

function lockDown(contents: WebContents, indexUrl: string): void {
  // The page never leaves the app: no navigation, no pop-ups, no webviews.
  contents.on('will-navigate', (e, url) => {
    if (url !== indexUrl) e.preventDefault();
  });
  contents.on('will-attach-webview', (e) => e.preventDefault());
  contents.setWindowOpenHandler(() => ({ action: 'deny' }));
}

async function createWindow(): Promise<void> {
  const root = appRoot();
  const indexFile = path.join(rendererDist(root), 'index.html');
  const indexUrl = pathToFileURL(indexFile).href;
  const jobs = new JobManager();
  let win: BrowserWindow | null = null;
  const pickFolder = async () => {
    const options = { title: 'Export the generated files to a folder', properties: ['openDirectory', 'createDirectory'] as ('openDirectory' | 'createDirectory')[] };
    const r = win ? await dialog.showOpenDialog(win, options) : await dialog.showOpenDialog(options);
    return r.canceled || r.filePaths.length === 0 ? null : r.filePaths[0];
  };
  const handlers = createHandlers({ shell: 'electron', version: APP_VERSION, demoDir: demoDir(root), captureDir: captureDir(), pickFolder, jobs, serial: await loadSerial() });

  // Every permission is refused except writing text to the clipboard (the HDL screen's Copy button).
  session.defaultSession.setPermissionRequestHandler((_wc, permission, callback) => callback(permission === 'clipboard-sanitized-write'));
  session.defaultSession.webRequest.onHeadersReceived((details, callback) => {
    callback({ responseHeaders: { ...details.responseHeaders, 'Content-Security-Policy': [contentSecurityPolicy()] } });
  });
  ipcMain.handle(IPC_CHANNEL, createIpcHandler(handlers, indexUrl, jobs));

  const w = new BrowserWindow(windowOptions(path.join(here, 'preload.cjs')));
  win = w;
  lockDown(w.webContents, indexUrl);
  w.once('ready-to-show', () => w.show());
  await w.loadFile(indexFile);
}

app.on('web-contents-created', (_e, contents) => contents.setWindowOpenHandler(() => ({ action: 'deny' })));
app.on('window-all-closed', () => app.quit());
app.whenReady().then(createWindow, (e: unknown) => {
  console.error(`Twinstep could not start: ${e instanceof Error ? e.message : String(e)}`);
  app.exit(1);
});
