// Where the app's own files are: the repository root in development, the unpacked app folder when
// packaged. Everything else is reached through dialogs or the project folder, never by free paths.
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

/** main/services/ and dist/electron/ both sit two levels below the app root. */
export function appRoot(): string {
  return path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
}

export function rendererDist(root = appRoot()): string {
  return path.join(root, 'dist', 'renderer');
}

export function demoDir(root = appRoot()): string {
  return path.join(root, 'fixtures');
}

/** Where bench sessions record captures: TWINSTEP_CAPTURES, else a folder in the user's home. */
export function captureDir(env: NodeJS.ProcessEnv = process.env): string {
  return env.TWINSTEP_CAPTURES ? path.resolve(env.TWINSTEP_CAPTURES) : path.join(os.homedir(), 'Twinstep', 'captures');
}

export const APP_VERSION = '0.1.0';
