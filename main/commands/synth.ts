// `twinstep synth FILE`: datapath, transition table, state encoding and controller equations of a
// design, as text or JSON; `--compare-encodings` prints the cost of every encoding side by side.
import { EXIT, parseOptions, type CliIO } from '../cli-io';
import { loadDesign } from '../design-file';
import { compareEncodings, synthesize } from '../../core/synth/index';
import { formatComparison, formatSynthesis } from '../../core/synth/format';
import { EncodingComparisonSchema, EncodingKindSchema, SynthesisSchema } from '../../core/synth/schema';

const USAGE = `usage: twinstep synth FILE.tsm [--encoding binary|gray|onehot|custom] [--share] [--json]
       twinstep synth FILE.tsm --compare-encodings [--share] [--json]

  --encoding E          state encoding (default binary); custom uses the 'code N' of each state
  --share               share functional units of one kind and width that are never busy in the same state
  --json                print the result as JSON instead of text
  --compare-encodings   flip-flops, product terms and literals for every encoding
`;

export async function run(argv: string[], io: CliIO): Promise<number> {
  const opts = parseOptions(argv, { flags: ['help', 'share', 'json', 'compare-encodings'], values: ['encoding'] });
  if (opts.flags.has('help')) {
    io.out(USAGE);
    return EXIT.ok;
  }
  const problems = [...opts.problems];
  if (opts.positionals.length !== 1) problems.push(opts.positionals.length === 0 ? 'no design file given' : `one design file expected, got ${opts.positionals.length}: ${opts.positionals.join(' ')}`);
  const encodingText = opts.values.get('encoding') ?? 'binary';
  const encoding = EncodingKindSchema.safeParse(encodingText);
  if (!encoding.success) problems.push(`--encoding must be binary, gray, onehot or custom, not '${encodingText}'`);
  if (opts.flags.has('compare-encodings') && opts.values.has('encoding')) problems.push('--compare-encodings covers every encoding; drop --encoding');
  if (problems.length > 0 || !encoding.success) {
    for (const p of problems) io.err(`twinstep synth: ${p}\n`);
    io.err(USAGE);
    return EXIT.usage;
  }

  const file = opts.positionals[0];
  const machine = loadDesign(file, io);
  if (!machine) return EXIT.errors;
  const shareUnits = opts.flags.has('share');

  if (opts.flags.has('compare-encodings')) {
    const c = compareEncodings(machine, { shareUnits });
    io.out(opts.flags.has('json') ? JSON.stringify(EncodingComparisonSchema.parse(c), null, 2) + '\n' : formatComparison(c));
    return EXIT.ok;
  }

  const r = synthesize(machine, { encoding: encoding.data, shareUnits });
  if (!r.ok) {
    io.err(`${file}: error: ${r.error}\n`);
    return EXIT.errors;
  }
  // Validating before printing keeps the JSON output to exactly the declared shape.
  io.out(opts.flags.has('json') ? JSON.stringify(SynthesisSchema.parse(r.result), null, 2) + '\n' : formatSynthesis(r.result));
  return EXIT.ok;
}
