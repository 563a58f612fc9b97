// `twinstep sim FILE (--stimulus S.csv | --random N [--seed K]) [--json] [--radix dec|hex|bin]`:
// runs the golden model and prints the per-cycle trace.
import { EXIT, parseOptions, type CliIO } from '../cli-io';
import { loadDesign, loadStimulus } from '../design-file';
import { formatTraceTable, simulate, traceRowJson, type Engine, type Radix } from '../../core/model/trace';

const USAGE = 'usage: twinstep sim FILE.tsm (--stimulus S.csv | --random N [--seed K]) [--json] [--radix dec|hex|bin] [--engine compiled|interpreter]\n';

export async function run(argv: string[], io: CliIO): Promise<number> {
  const opts = parseOptions(argv, { flags: ['help', 'json'], values: ['stimulus', 'random', 'seed', 'radix', 'engine'] });
  if (opts.flags.has('help')) {
    io.out(USAGE);
    return EXIT.ok;
  }
  if (opts.positionals.length !== 1 || opts.problems.length) {
    for (const p of opts.problems) io.err(`twinstep sim: ${p}\n`);
    io.err(USAGE);
    return EXIT.usage;
  }
  const radix = (opts.values.get('radix') ?? 'dec') as Radix;
  const engine = (opts.values.get('engine') ?? 'compiled') as Engine;
  if (!['dec', 'hex', 'bin'].includes(radix) || !['compiled', 'interpreter'].includes(engine)) {
    io.err(USAGE);
    return EXIT.usage;
  }
  const m = loadDesign(opts.positionals[0], io, { quietWarnings: true });
  if (!m) return EXIT.errors;
  const stim = loadStimulus(m, opts.values, io);
  if (!stim) return EXIT.usage;
  const trace = simulate(m, stim.rows, stim.cycles, engine);
  if (opts.flags.has('json')) {
    for (const row of trace) io.out(JSON.stringify(traceRowJson(m, row)) + '\n');
  } else {
    io.out(formatTraceTable(m, trace, radix));
  }
  return EXIT.ok;
}
