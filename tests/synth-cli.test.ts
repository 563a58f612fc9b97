// The `synth` command run in-process: exit codes, text sections, JSON validated by its schema, and
// the JSON's equations checked against the IR semantics (the independent reference).
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { run } from '../main/commands/synth';
import type { CliIO } from '../main/cli-io';
import { EncodingComparisonSchema, SynthesisSchema } from '../core/synth/schema';
import { FIXTURE_DIR, equationsVersusTable, fixtureMachines, simulateAgainstIr } from './synth-reference';

async function cli(argv: string[], cwd = FIXTURE_DIR): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const io: CliIO = { out: (t) => (out += t), err: (t) => (err += t), cwd };
  const code = await run(argv, io);
  return { code, out, err };
}

const FIRST = fixtureMachines()[0];

describe('twinstep synth', () => {
  it('prints every section of the report for a fixture', async () => {
    const r = await cli([FIRST.file]);
    expect(r.code).toBe(0);
    for (const heading of ['Datapath', 'functional units', 'status signals', 'Controller', 'transition table', 'State encoding: binary', 'Equations', 'Cost:']) expect(r.out).toContain(heading);
    // Every state of the design appears in the encoding table.
    for (const s of FIRST.machine.states) expect(r.out).toMatch(new RegExp(`^  ${s.name}\\s+[01]+$`, 'm'));
  });

  it('--json prints a Synthesis that passes its schema and simulates like the IR', async () => {
    const r = await cli([FIRST.file, '--encoding', 'gray', '--share', '--json']);
    expect(r.code).toBe(0);
    const s = SynthesisSchema.parse(JSON.parse(r.out));
    expect(s.encoding.kind).toBe('gray');
    expect(s.datapath.shareUnits).toBe(true);
    expect(equationsVersusTable(s, s.equations)).toEqual([]);
    expect(simulateAgainstIr(FIRST.machine, s, s.equations, 500, 3)).toEqual([]);
  });

  it('--compare-encodings prints one row per encoding; --json gives the schema', async () => {
    const text = await cli([FIRST.file, '--compare-encodings']);
    expect(text.code).toBe(0);
    for (const e of ['binary', 'gray', 'onehot', 'onehot full decode', 'custom']) expect(text.out).toContain(e);
    const json = await cli([FIRST.file, '--compare-encodings', '--json']);
    const c = EncodingComparisonSchema.parse(JSON.parse(json.out));
    expect(c.rows.map((x) => x.encoding)).toEqual(['binary', 'gray', 'onehot', 'onehot full decode', 'custom']);
    // A one-hot register has one flip-flop per state (definition of one-hot).
    expect(c.rows.find((x) => x.encoding === 'onehot')!.flipFlops).toBe(FIRST.machine.states.length);
  });

  it('usage errors exit 2 with a message naming the problem', async () => {
    expect((await cli([])).code).toBe(2);
    const bad = await cli([FIRST.file, '--encoding', 'octal']);
    expect(bad.code).toBe(2);
    expect(bad.err).toContain("--encoding must be binary, gray, onehot or custom, not 'octal'");
    const unknown = await cli([FIRST.file, '--fast']);
    expect(unknown.code).toBe(2);
    expect(unknown.err).toContain('unknown option --fast');
    const both = await cli([FIRST.file, '--compare-encodings', '--encoding', 'gray']);
    expect(both.code).toBe(2);
    expect((await cli(['--help'])).code).toBe(0);
  });

  it('design errors and synthesis errors exit 1 with file-named messages', async () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'twinstep-synth-'));
    writeFileSync(path.join(dir, 'broken.tsm'), 'machine broken\nstate A\n  on nothing go B\n');
    const broken = await cli(['broken.tsm'], dir);
    expect(broken.code).toBe(1);
    expect(broken.err).toMatch(/^broken\.tsm:\d+:\d+: error: /m);
    writeFileSync(path.join(dir, 'nocodes.tsm'), 'machine nocodes\nin a : bit\nstate A\n  on a go B\nstate B\n  go A\n');
    const custom = await cli(['nocodes.tsm', '--encoding', 'custom'], dir);
    expect(custom.code).toBe(1);
    expect(custom.err).toMatch(/^nocodes\.tsm: error: custom encoding: the design gives no state codes/);
    const missing = await cli(['absent.tsm'], dir);
    expect(missing.code).toBe(1);
    expect(missing.err).toContain('absent.tsm: error: cannot read design: no such file');
  });
});
