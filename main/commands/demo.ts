// `twinstep demo`: checks the bundled demo design, simulates it on its stimulus and prints the
// trace and a summary. This is what `npm start` falls back to when no display is wanted.
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { EXIT, parseOptions, type CliIO } from '../cli-io';
import { loadDesign, loadStimulus } from '../design-file';
import { formatTraceTable, simulate } from '../../core/model/trace';
import { fingerprint } from '../../core/ir/fingerprint';
import { formatValue } from '../../core/util/bits';

const FIXTURES = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../fixtures');

export async function run(argv: string[], io: CliIO): Promise<number> {
  const opts = parseOptions(argv, { flags: ['help'], values: ['design'] });
  if (opts.flags.has('help') || opts.problems.length) {
    io.out('usage: twinstep demo [--design NAME]   (default: tank_dosing)\n');
    return opts.problems.length ? EXIT.usage : EXIT.ok;
  }
  const name = opts.values.get('design') ?? 'tank_dosing';
  const file = path.join(FIXTURES, `${name}.tsm`);
  const rel = path.relative(io.cwd, file);
  const m = loadDesign(file, io);
  if (!m) return EXIT.errors;
  io.out(`Design ${rel}: machine ${m.name}, ${m.states.length} states, ${m.registers.length} registers; fingerprint ${fingerprint(m).slice(0, 16)}\n\n`);
  const stim = loadStimulus(m, new Map([['stimulus', path.join(FIXTURES, `${name}.csv`)]]), io);
  if (!stim) return EXIT.errors;
  const trace = simulate(m, stim.rows, stim.cycles);
  io.out(formatTraceTable(m, trace));
  const visits = new Map<string, number>();
  let moves = 0;
  for (const r of trace) {
    visits.set(m.states[r.state].name, (visits.get(m.states[r.state].name) ?? 0) + 1);
    if (r.fired >= 0 && m.states[r.state].transitions[r.fired].target !== r.state) moves++;
  }
  const last = trace[trace.length - 1];
  io.out(`\nSummary: ${trace.length} cycles, ${moves} state changes.\n`);
  io.out(`  cycles per state: ${[...visits].map(([s, n]) => `${s} ${n}`).join(', ')}\n`);
  if (last) io.out(`  registers during the last cycle: ${m.registers.map((r, i) => `${r.name}=${formatValue(last.regs[i], r.type.width, r.type.signed)}`).join(', ')}\n`);
  io.out('\nNext: twinstep synth, twinstep gen, or `npm start` for the app.\n');
  return EXIT.ok;
}
