// Finding Electron's binary and opening a URL in the desktop's browser: the two decisions `npm start`
// makes before it chooses between the desktop window and serve mode.
import { spawn } from 'node:child_process';
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';

/**
 * Path of the Electron binary, or null when the package is there without its binary (its install
 * step downloads the binary, which not every machine can). `load` is require('electron') by default.
 */
export function findElectron(load: (id: string) => unknown = createRequire(import.meta.url)): string | null {
  try {
    const p = load('electron');
    return typeof p === 'string' && existsSync(p) ? p : null;
  } catch {
    return null;
  }
}

/** The command that opens a URL on this platform. */
export function openerFor(platform: NodeJS.Platform, url: string): [string, string[]] {
  if (platform === 'darwin') return ['open', [url]];
  if (platform === 'win32') return ['cmd', ['/c', 'start', '""', url]];
  return ['xdg-open', [url]];
}

/** Asks the desktop to open a URL; failing to is fine, the URL is printed anyway. */
export function openInBrowser(url: string): void {
  const [cmd, args] = openerFor(process.platform, url);
  try {
    const child = spawn(cmd, args, { stdio: 'ignore', detached: true });
    child.on('error', () => {});
    child.unref();
  } catch {
    // No opener on this system: the printed URL is the way in.
  }
}
