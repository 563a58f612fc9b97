// Reading a design or stimulus file for a CLI command: file errors and checker diagnostics
// become printed messages and an exit code, never an exception.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { checkDesign } from '../core/check/checker';
import type { Machine } from '../core/ir/schema';
import { formatDiagnostic } from '../core/util/diagnostic';
import { parseStimulusCsv, randomStimulus } from '../core/model/stimulus';
import type { CliIO } from './cli-io';

export function readText(file: string, io: CliIO, what: string): string | null {
  try {
    return readFileSync(path.resolve(io.cwd, file), 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    const why = code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'is a directory' : code === 'EACCES' ? 'permission denied' : (e as Error).message;
    io.err(`${file}: error: cannot read ${what}: ${why}\n`);
    return null;
  }
}

/** Loads and checks a design; prints diagnostics (warnings too); returns null when unusable. */
export function loadDesign(file: string, io: CliIO, opts: { quietWarnings?: boolean } = {}): Machine | null {
  const text = readText(file, io, 'design');
  if (text === null) return null;
  const r = checkDesign(text, file);
  for (const d of r.diagnostics) {
    if (d.severity === 'error' || !opts.quietWarnings) io.err(formatDiagnostic(file, d) + '\n');
  }
  return r.machine;
}

/** Stimulus from `--stimulus FILE` or `--random N [--seed K]`. */
export function loadStimulus(m: Machine, values: Map<string, string>, io: CliIO): { rows: bigint[][]; cycles: number } | null {
  const file = values.get('stimulus');
  const random = values.get('random');
  if (file && random) {
    io.err('twinstep: give either --stimulus or --random, not both\n');
    return null;
  }
  if (file) {
    const text = readText(file, io, 'stimulus');
    if (text === null) return null;
    const r = parseStimulusCsv(text, m);
    if (!r.ok) {
      for (const d of r.diagnostics) io.err(formatDiagnostic(file, d) + '\n');
      return null;
    }
    return { rows: r.rows, cycles: r.rows.length };
  }
  if (random) {
    const n = Number(random);
    const seed = Number(values.get('seed') ?? '1');
    if (!Number.isInteger(n) || n < 0 || n > 100_000_000) {
      io.err(`twinstep: --random needs a cycle count from 0 to 100000000, got '${random}'\n`);
      return null;
    }
    if (!Number.isInteger(seed)) {
      io.err(`twinstep: --seed needs an integer, got '${values.get('seed')}'\n`);
      return null;
    }
    return { rows: randomStimulus(m, n, seed), cycles: n };
  }
  io.err('twinstep: give a stimulus: --stimulus FILE.csv or --random N [--seed K]\n');
  return null;
}
