// `twinstep gen FILE --out DIR`: writes the controller, datapath and top Verilog modules, optionally
// a self-checking testbench for a stimulus and the UART probe's board top.
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { EXIT, parseOptions, type CliIO, usageFailure } from '../cli-io';
import { loadDesign, loadStimulus } from '../design-file';
import { synthesize } from '../../core/synth/index';
import { generateHdl, type ControllerStyle, type ResetPolarity } from '../../core/hdl/modules';
import { generateTestbench } from '../../core/hdl/testbench';
import { simulate } from '../../core/model/trace';
import { generateProbeFiles } from '../../core/probe/board';

const USAGE = `usage: twinstep gen FILE.tsm --out DIR [--encoding binary|gray|onehot|custom] [--controller behavioral|equations]
                    [--reset low|high] [--testbench STIM.csv | --testbench-random N [--seed K]]
                    [--probe [--clock-hz N] [--baud N]]
`;

export async function run(argv: string[], io: CliIO): Promise<number> {
  const opts = parseOptions(argv, { flags: ['help', 'probe'], values: ['out', 'encoding', 'controller', 'reset', 'testbench', 'testbench-random', 'seed', 'clock-hz', 'baud'] });
  if (opts.flags.has('help')) {
    io.out(USAGE);
    return EXIT.ok;
  }
  const problems = [...opts.problems];
  const out = opts.values.get('out');
  const encoding = opts.values.get('encoding') ?? 'binary';
  const controller = (opts.values.get('controller') ?? 'behavioral') as ControllerStyle;
  const reset = (opts.values.get('reset') ?? 'low') as ResetPolarity;
  if (opts.positionals.length !== 1) problems.push('give exactly one design file');
  if (!out) problems.push('--out DIR is required');
  if (!['binary', 'gray', 'onehot', 'custom'].includes(encoding)) problems.push(`unknown encoding '${encoding}'`);
  if (!['behavioral', 'equations'].includes(controller)) problems.push(`unknown controller style '${controller}'`);
  if (!['low', 'high'].includes(reset)) problems.push(`--reset takes low or high, not '${reset}'`);
  if (problems.length) return usageFailure(io, 'twinstep gen', problems, USAGE);
  const m = loadDesign(opts.positionals[0], io, { quietWarnings: true });
  if (!m) return EXIT.errors;
  const syn = synthesize(m, { encoding: encoding as 'binary' });
  if (!syn.ok) {
    io.err(`${opts.positionals[0]}: error: synthesis failed: ${syn.error}\n`);
    return EXIT.errors;
  }
  const hdl = generateHdl(m, syn.result, { controller, reset });
  const files = [...hdl.files];
  const tbFile = opts.values.get('testbench');
  const tbRandom = opts.values.get('testbench-random');
  if (tbFile || tbRandom) {
    const stimOpts = new Map<string, string>();
    if (tbFile) stimOpts.set('stimulus', tbFile);
    if (tbRandom) stimOpts.set('random', tbRandom);
    if (opts.values.has('seed')) stimOpts.set('seed', opts.values.get('seed')!);
    const stim = loadStimulus(m, stimOpts, io);
    if (!stim) return EXIT.usage;
    const trace = simulate(m, stim.rows, stim.cycles);
    files.push(generateTestbench(m, hdl.names, stim.rows, trace));
  }
  if (opts.flags.has('probe')) {
    const clockHz = opts.values.has('clock-hz') ? Number(opts.values.get('clock-hz')) : undefined;
    const baud = opts.values.has('baud') ? Number(opts.values.get('baud')) : undefined;
    const r = generateProbeFiles(m, syn.result, hdl.names, { clockHz, baud, reset });
    if (!r.ok) {
      io.err(`twinstep gen: ${r.error}\n`);
      return EXIT.usage;
    }
    files.push(...r.files);
    for (const n of r.notes) io.out(`note: ${n}\n`);
  }
  const dir = path.resolve(io.cwd, out!);
  try {
    mkdirSync(dir, { recursive: true });
    for (const f of files) writeFileSync(path.join(dir, f.name), f.text);
  } catch (e) {
    io.err(`${out}: error: cannot write: ${(e as Error).message}\n`);
    return EXIT.usage;
  }
  io.out(`wrote ${files.length} files to ${out}: ${files.map((f) => f.name).join(', ')}\n`);
  io.out(`state encoding ${syn.result.encoding.kind} (${syn.result.encoding.width} flip-flops), controller ${controller}, reset pin active ${reset}\n`);
  return EXIT.ok;
}
