// Builds the renderer with vite's JS API when dist/renderer is missing or older than its sources,
// so `npm start` and serve mode always show the current screens without a separate build step.
import { existsSync } from 'node:fs';
import { mkdir, readdir, rmdir, stat } from 'node:fs/promises';
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
  const sources = [path.join(root, 'renderer'), path.join(root, 'vite.config.ts'), path.join(root, 'core')].filter((p) => existsSync(p));
  for (const s of sources) if ((await newestMtime(s)) > built) return true;
  return false;
}

const LOCK_STALE_MS = 180_000;

/**
 * Runs `work` while holding a lock directory, so two processes (two `npm start`s, parallel tests)
 * never build into dist/renderer at once. A lock older than LOCK_STALE_MS is taken as abandoned.
 */
async function withBuildLock<T>(root: string, work: () => Promise<T>): Promise<T> {
  const lock = path.join(root, 'dist', '.renderer-build.lock');
  await mkdir(path.dirname(lock), { recursive: true });
  for (;;) {
    try {
      await mkdir(lock);
      break;
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
      const age = await stat(lock).then((s) => Date.now() - s.mtimeMs, () => 0);
      if (age > LOCK_STALE_MS) await rmdir(lock).catch(() => {});
      else await new Promise((r) => setTimeout(r, 200));
    }
  }
  try {
    return await work();
  } finally {
    await rmdir(lock).catch(() => {});
  }
}

/** Builds when stale; returns whether a build ran. Without sources (a packaged app) it never builds. */
export async function ensureRendererBuilt(root: string, log: (line: string) => void = () => {}): Promise<boolean> {
  if (!existsSync(path.join(root, 'renderer'))) return false;
  if (!(await rendererIsStale(root))) return false;
  return withBuildLock(root, async () => {
    // Another process may have finished the same build while this one waited for the lock.
    if (!(await rendererIsStale(root))) return false;
    log('building the renderer (vite)...\n');
    const { build } = await import('vite');
    // A build started from a test runner inherits NODE_ENV=test, which would give React's development
    // build; the app always ships the production one.
    const before = process.env.NODE_ENV;
    process.env.NODE_ENV = 'production';
    try {
      await build({ configFile: path.join(root, 'vite.config.ts'), logLevel: 'warn', mode: 'production' });
    } finally {
      if (before === undefined) delete process.env.NODE_ENV;
      else process.env.NODE_ENV = before;
    }
    return true;
  });
}
