// `twinstep gen` as a user runs it: files written, a testbench that Icarus Verilog passes, clear errors.
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { cli } from './support/cli';
import { runIcarus, tempDir } from './support/tools';
import { fingerprint } from '../core/ir/fingerprint';
import { loadFixture } from './support/load';

describe('twinstep gen', () => {
  it('writes one module per file with the documented header, and a testbench that passes in Icarus Verilog', async () => {
    const dir = tempDir('gen');
    const r = await cli(['gen', 'fixtures/bottle_capper.tsm', '--out', dir, '--encoding', 'gray', '--controller', 'equations', '--testbench', 'fixtures/bottle_capper.csv']);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const names = readdirSync(dir).sort();
    expect(names).toEqual(['bottle_capper_ctrl.v', 'bottle_capper_dp.v', 'bottle_capper_top.v', 'tb_bottle_capper.v']);
    const files = Object.fromEntries(names.map((n) => [n, readFileSync(path.join(dir, n), 'utf8')]));
    const fp = fingerprint(loadFixture('bottle_capper').machine);
    for (const n of names.filter((x) => !x.startsWith('tb_'))) {
      expect(files[n]).toContain(`Design fingerprint ${fp}`);
      expect(files[n]).toContain('Do not edit');
      expect(files[n]).toContain('State encoding: gray');
      expect((files[n].match(/^module /gm) ?? []).length).toBe(1);
    }
    expect(files['bottle_capper_ctrl.v']).toMatch(/localparam \[3:0\] ST_Stopped = 4'b0000;/);
    expect(runIcarus(files, 'tb_bottle_capper').trim().split('\n').pop()).toMatch(/^PASS: bottle_capper matches the model for 52 cycles/);
  });

  it('reports unusable options and unusable designs', async () => {
    const bad = await cli(['gen', 'fixtures/tank_dosing.tsm', '--out', tempDir('gen'), '--encoding', 'sideways']);
    expect(bad.code).toBe(2);
    expect(bad.err).toContain("unknown encoding 'sideways'");
    const custom = await cli(['gen', 'fixtures/tank_dosing.tsm', '--out', tempDir('gen'), '--encoding', 'custom']);
    expect(custom.code).toBe(1);
    expect(custom.err).toMatch(/synthesis failed: .*code/);
    const noOut = await cli(['gen', 'fixtures/tank_dosing.tsm']);
    expect(noOut.code).toBe(2);
    expect(noOut.err).toContain('--out DIR is required');
  });
});
