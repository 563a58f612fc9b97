// The command line as users meet it: exit codes, messages for bad input, trace output.
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { cli } from './support/cli';

describe('twinstep check', () => {
  it('exits 0 on a clean design', async () => {
    const r = await cli(['check', 'fixtures/tank_dosing.tsm']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/ok: machine tank_dosing, 4 states/);
  });

  it('exits 1 with FILE:LINE:COL diagnostics on errors', async () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'ts-cli-'));
    writeFileSync(path.join(dir, 'bad.tsm'), 'machine m\nreg r : u4\nstate A\n  r <- r + 99\n');
    const r = await cli(['check', 'bad.tsm'], dir);
    expect(r.code).toBe(1);
    expect(r.err).toContain('bad.tsm:4:12: error: 99 does not fit u4 here\n    hint: values of u4 run from 0 to 15\n');
  });

  it('names a missing file instead of crashing, and rejects bad usage with exit 2', async () => {
    const r = await cli(['check', 'nope.tsm']);
    expect(r.code).toBe(1);
    expect(r.err).toBe('nope.tsm: error: cannot read design: no such file\n');
    expect((await cli(['check'])).code).toBe(2);
    expect((await cli(['frobnicate'])).code).toBe(2);
  });
});

describe('twinstep sim', () => {
  it('prints an aligned table with state names', async () => {
    const r = await cli(['sim', 'fixtures/tank_dosing.tsm', '--stimulus', 'fixtures/tank_dosing.csv']);
    expect(r.code).toBe(0);
    const lines = r.out.trimEnd().split('\n');
    expect(lines[0].split(/\s+/)).toEqual(['cycle', 'go_btn', 'pulse', 'dose', 'abort', 'state', 'target', 'poured', 'runs', 'pump', 'valve', 'done', 'shown']);
    expect(lines).toHaveLength(2 + 17);
    expect(lines[2 + 8].trim().split(/\s+/).slice(0, 7)).toEqual(['8', '0', '0', '0', '0', 'Finish', '3']);
  });

  it('--json gives one object per cycle', async () => {
    const r = await cli(['sim', 'fixtures/trim_servo.tsm', '--stimulus', 'fixtures/trim_servo.csv', '--json']);
    const rows = r.out.trim().split('\n').map((l) => JSON.parse(l));
    expect(rows).toHaveLength(17);
    expect(rows[8]).toMatchObject({ cycle: 8, state: 'Limit', regs: { integ: -800 }, outputs: { saturated: 1 }, next: 'Wait' });
  });

  it('--random N --seed K is reproducible', async () => {
    const a = await cli(['sim', 'fixtures/bottle_capper.tsm', '--random', '50', '--seed', '9', '--json']);
    const b = await cli(['sim', 'fixtures/bottle_capper.tsm', '--random', '50', '--seed', '9', '--json']);
    expect(a.out).toBe(b.out);
    expect(a.out.trim().split('\n')).toHaveLength(50);
  });

  it('reports a bad stimulus cell with its position', async () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'ts-cli-'));
    writeFileSync(path.join(dir, 's.csv'), 'sample,setpoint,measured\n1,2,x\n');
    const r = await cli(['sim', path.resolve('fixtures/trim_servo.tsm'), '--stimulus', 's.csv'], dir);
    expect(r.code).toBe(2);
    expect(r.err).toBe("s.csv:2:5: error: 'x' is not a number (input 'measured')\n    hint: write 12, -3, 0x1F or 0b101\n");
  });
});

describe('twinstep demo', () => {
  it('checks and simulates the bundled demo and prints a summary', async () => {
    // Hand count from the trace worked out in fixtures.test.ts: Idle>Prime>Pump>Finish>Idle>Prime>Pump>Idle.
    const r = await cli(['demo']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/machine tank_dosing, 4 states/);
    expect(r.out).toMatch(/Summary: 17 cycles, 7 state changes\./);
  });
});
