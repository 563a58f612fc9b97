// Bundles the Electron main process (ESM) and the sandboxed preload (CommonJS, self-contained)
// into dist/electron with vite's JS API; electron and the native serial module stay external.
import path from 'node:path';

const EXTERNAL = ['electron', 'serialport', /^@serialport\//];

export async function buildElectron(root: string): Promise<void> {
  const { build } = await import('vite');
  const outDir = path.join(root, 'dist', 'electron');
  const common = { configFile: false as const, root, logLevel: 'warn' as const, publicDir: false as const };
  await build({
    ...common,
    ssr: { noExternal: true, external: ['electron', 'serialport'] },
    build: {
      ssr: path.join(root, 'main', 'electron', 'main.ts'),
      outDir,
      emptyOutDir: true,
      target: 'node20',
      rollupOptions: { external: EXTERNAL, output: { format: 'es', entryFileNames: 'main.mjs' } },
    },
  });
  await build({
    ...common,
    ssr: { noExternal: true, external: ['electron'] },
    build: {
      ssr: path.join(root, 'main', 'electron', 'preload.ts'),
      outDir,
      emptyOutDir: false,
      target: 'node20',
      rollupOptions: { external: ['electron'], output: { format: 'cjs', entryFileNames: 'preload.cjs' } },
    },
  });
}

// `npx tsx main/electron/build.ts`: the renderer and both Electron bundles, ready for electron-builder.
if (process.argv[1] && /main[\\/]electron[\\/]build\.ts$/.test(process.argv[1])) {
  const { appRoot } = await import('../services/paths');
  const { ensureRendererBuilt } = await import('../services/renderer-build');
  const root = appRoot();
  await ensureRendererBuilt(root, (l) => process.stderr.write(l));
  await buildElectron(root);
  process.stdout.write(`built ${path.join(root, 'dist', 'renderer')} and ${path.join(root, 'dist', 'electron')}\n`);
}
