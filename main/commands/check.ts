// `twinstep check FILE`: diagnostics for a design; exit 0 when clean (warnings allowed), 1 on errors.
import { EXIT, parseOptions, type CliIO } from '../cli-io';
import { loadDesign } from '../design-file';
import { fingerprint } from '../../core/ir/fingerprint';

export async function run(argv: string[], io: CliIO): Promise<number> {
  const opts = parseOptions(argv, { flags: ['help'] });
  if (opts.flags.has('help') || opts.positionals.length !== 1 || opts.problems.length) {
    for (const p of opts.problems) io.err(`twinstep check: ${p}\n`);
    io.out('usage: twinstep check FILE.tsm\n');
    return opts.flags.has('help') ? EXIT.ok : EXIT.usage;
  }
  const file = opts.positionals[0];
  const m = loadDesign(file, io);
  if (!m) return EXIT.errors;
  io.out(`${file}: ok: machine ${m.name}, ${m.states.length} states, ${m.registers.length} registers, ${m.inputs.length} inputs, ${m.outputs.length} outputs; fingerprint ${fingerprint(m).slice(0, 16)}\n`);
  return EXIT.ok;
}
