// The replay testbench: the captured inputs replayed into the generated design under Icarus Verilog. A board
// fault that is not in the design does not reproduce (PASS); a design that really differs from the model is
// caught at the cycle where it first shows (FAIL), computed here from the model trace.
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { captureHeader } from '../core/capture/header';
import { randomStimulus } from '../core/model/stimulus';
import { simulate } from '../core/model/trace';
import { CaptureWriter } from '../main/serial/capture-file';
import { design, probeStream, runBoard, concat } from './compare-frames';
import { cli } from './support/cli';
import { FIXTURES } from './support/load';
import { requireTool, runIcarus, tempDir } from './support/tools';
import { encodeIdFrame, LAYOUT_VERSION } from '../core/protocol/frame';

describe('replay testbench', () => {
  const d = design('tank_dosing');
  const rows = randomStimulus(d.m, 400, 12);
  const pump = d.m.states.findIndex((s) => s.name === 'Pump');
  const plain = runBoard(d, rows);
  const at = plain.findIndex((c, k) => k > 50 && c.state === pump && c.computedNext !== 0);

  async function exportFor(stream: Uint8Array) {
    const dir = tempDir('tb');
    const capture = path.join(dir, 'run.tscap');
    const w = CaptureWriter.create(capture, captureHeader(d.m, d.layout, { port: 'test', baud: 115200, clockHz: 12e6 }, new Date(), { drive: null, cycles: null }));
    if (!w.ok) throw new Error(w.error);
    w.writer.receivedBytes(stream);
    w.writer.close('test');
    const out = path.join(dir, 'tb');
    const r = await cli(['replay', capture, '--design', path.join(FIXTURES, 'tank_dosing.tsm'), '--testbench', out]);
    const files = Object.fromEntries(readdirSync(out).map((f) => [f, readFileSync(path.join(out, f), 'utf8')]));
    return { r, files, out };
  }

  it('holds the captured inputs row by row and passes in Icarus Verilog: the board fault does not reproduce', async () => {
    requireTool('iverilog');
    const board = runBoard(d, rows, [{ kind: 'jump', at, to: 0 }]);
    const { r, files } = await exportFor(probeStream(d.layout, board));
    expect(r.code).toBe(3);
    expect(r.err).toMatch(new RegExp(`replays 400 captured input rows from reset; the board diverged first at cycle ${at + 1}`));
    const tb = files['tb_tank_dosing.v'];
    // Every row of the capture is in the testbench's input table (the generator's `in_<name>[k]` arrays).
    const dose = d.m.inputs.findIndex((i) => i.name === 'dose');
    for (let k = 0; k < 400; k++) expect(tb).toContain(`in_dose[${k}] = 8'h${rows[k][dose].toString(16)};`);
    const log = runIcarus(files, 'tb_tank_dosing');
    expect(log).toMatch(/PASS: tank_dosing matches the model for 400 cycles/);
  });

  it('catches a design that differs from the model at the first cycle the difference shows', async () => {
    requireTool('iverilog');
    const { files } = await exportFor(probeStream(d.layout, plain));
    // Make the generated adder count by 2: the HDL no longer matches the model.
    files['tank_dosing_dp.v'] = files['tank_dosing_dp.v'].replace("{poured + 8'd1}", "{poured + 8'd2}");
    expect(files['tank_dosing_dp.v']).toContain("poured + 8'd2");
    // From the model trace: the first cycle after one in which poured was incremented (it changes by +1).
    const trace = simulate(d.m, rows);
    const p = d.m.registers.findIndex((r) => r.name === 'poured');
    const first = trace.findIndex((t, k) => k > 0 && t.regs[p] === trace[k - 1].regs[p] + 1n);
    expect(first).toBeGreaterThan(0);
    const log = runIcarus(files, 'tb_tank_dosing');
    expect(log).toMatch(new RegExp(`FAIL: tank_dosing diverges from the model at cycle ${first} \\(signal poured\\)`));
  });

  it('says why no testbench can be made when the capture never shows a reset', async () => {
    // Frames without the identification frame after reset: the inputs from reset are unknown.
    const stream = concat([encodeIdFrame({ fingerprint: d.layout.fingerprint, layoutVersion: LAYOUT_VERSION, payloadBits: d.layout.frame.payloadBits, nextCounter: 0, afterReset: false }), probeStream(d.layout, plain.slice(0, 20), { reset: false })]);
    const dir = tempDir('tb');
    const capture = path.join(dir, 'run.tscap');
    const w = CaptureWriter.create(capture, captureHeader(d.m, d.layout, { port: 'test', baud: 115200, clockHz: 12e6 }, new Date(), { drive: null, cycles: null }));
    if (!w.ok) throw new Error(w.error);
    w.writer.receivedBytes(stream);
    w.writer.close('test');
    const r = await cli(['replay', capture, '--design', path.join(FIXTURES, 'tank_dosing.tsm'), '--testbench', path.join(dir, 'tb')]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/no testbench written: the capture has no frames after a reset/);
  });
});
