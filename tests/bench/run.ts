// `npm run bench`: prints every speed and resource figure of the project. Sections that depend on
// parts not built yet are listed as missing rather than skipped silently.
import { existsSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));

const SECTIONS: { file: string; fn: string }[] = [
  { file: 'model.ts', fn: 'benchModel' },
  { file: 'minimize.ts', fn: 'benchMinimize' },
  { file: 'synth.ts', fn: 'benchSynth' },
  { file: 'hdl.ts', fn: 'benchHdl' },
  { file: 'protocol.ts', fn: 'benchProtocol' },
  { file: 'probe.ts', fn: 'benchProbe' },
  { file: 'replay.ts', fn: 'benchReplay' },
];

const only = process.argv.slice(2);
for (const s of SECTIONS) {
  if (only.length && !only.some((o) => s.file.startsWith(o))) continue;
  const file = path.join(here, s.file);
  if (!existsSync(file)) {
    console.log(`[${s.file}] not present in this build\n`);
    continue;
  }
  const t0 = performance.now();
  const mod = (await import(file)) as Record<string, () => Promise<string>>;
  console.log(await mod[s.fn]());
  console.log(`  (section took ${((performance.now() - t0) / 1000).toFixed(1)} s)\n`);
}
