// Builds the renderer with vite's JS API when dist/renderer is missing or older than its sources,
// so `npm start` and serve mode always show the current screens without a separate build step.
import { existsSync } from 'node:fs';
import { readdir, stat } from 'node:fs/promises';
import path from 'node:path';
import { rendererDist } from './paths';

async function newestMtime(entry: string): Promise<number> {
  const s = await stat(entry);
  if (!s.isDirectory()) return s.mtimeMs;
  let newest = 0;
  for (const name of await readdir(entry)) newest = Math.max(newest, await newestMtime(path.join(entry, name)));
  return newest;
}

/** True when the built index.html is older than any renderer source or the vite config. */
export async function rendererIsStale(root: string): Promise<boolean> {
  const index = path.join(rendererDist(root), 'index.html');
  if (!existsSync(index)) return true;
  const built = (await stat(index)).mtimeMs;
  const sources = [path.join(root, 'renderer'), path.join(root, 'vite.config.ts'), path.join(root, 'core', 'services')].filter((p) => existsSync(p));
  for (const s of sources) if ((await newestMtime(s)) > built) return true;
  return false;
}

/** Builds when stale; returns whether a build ran. Without sources (a packaged app) it never builds. */
export async function ensureRendererBuilt(root: string, log: (line: string) => void = () => {}): Promise<boolean> {
  if (!existsSync(path.join(root, 'renderer'))) return false;
  if (!(await rendererIsStale(root))) return false;
  log('building the renderer (vite)...\n');
  const { build } = await import('vite');
  await build({ configFile: path.join(root, 'vite.config.ts'), logLevel: 'warn' });
  return true;
}
