// The board top with the probe under the outside tools: Verilator lint (-Wall) and Yosys synth_ice40, both from
// Debian; and the generator's messages for settings no board can use.
import { describe, expect, it } from 'vitest';
import { generateProbeFiles } from '../core/probe/board';
import { generateHdl } from '../core/hdl/modules';
import { synthesize } from '../core/synth/index';
import { checkText, fixtureNames } from './support/load';
import { runYosys, verilatorLint } from './support/tools';
import { buildBoard } from './probe-board';

describe('board top: Verilator lint and Yosys synth_ice40', () => {
  for (const name of fixtureNames()) {
    it(`${name}: lint-clean with -Wall (waivers only where commented) and synthesizable for the iCE40`, () => {
      const b = buildBoard(name, { clockHz: 12_000_000, baud: 115_200 });
      expect(verilatorLint(b.files, b.build.top)).toBe('');
      const log = runYosys(b.files, `read_verilog ${Object.keys(b.files).join(' ')}; synth_ice40 -top ${b.build.top}; stat`);
      // Yosys prints the mapped cell counts; an iCE40 netlist of the whole board has LUTs and flip-flops.
      expect(log).toMatch(/SB_LUT4\s+\d+/);
      expect(log).toMatch(/SB_DFF\w*\s+\d+/);
    });
  }

  it('every lint waiver in the generated files carries a comment saying why', () => {
    const b = buildBoard('event_stamper');
    for (const [file, text] of Object.entries(b.files)) {
      const lines = text.split('\n');
      lines.forEach((line, i) => {
        if (!line.includes('verilator lint_off')) return;
        const context = [lines[i - 1] ?? '', line, lines[i - 2] ?? ''].join('\n');
        expect(context, `${file}:${i + 1}`).toMatch(/\/\/ \S/);
      });
    }
  });
});

describe('probe generation: bad settings give one clear message', () => {
  const design = (text: string) => {
    const r = checkText(text);
    if (!r.machine) throw new Error('test design does not check');
    const s = synthesize(r.machine, { encoding: 'binary' });
    if (!s.ok) throw new Error(s.error);
    return { m: r.machine, syn: s.result, names: generateHdl(r.machine, s.result, { controller: 'behavioral', reset: 'low' }).names };
  };
  const small = design(`machine blinker\nclock 12 MHz\nin start : bit\nout led : bit = 0\nstate Off initial\n  on start go On\nstate On\n  led = 1\n  go Off\n`);

  it('a baud the clock cannot reach within tolerance', () => {
    // 1 MHz / 57600 = 17.36 -> divisor 17 -> 58823.5 baud, 2.1% fast: beyond the 2% per end of common practice.
    const r = generateProbeFiles(small.m, small.syn, small.names, { reset: 'low', clockHz: 1_000_000, baud: 57_600 });
    expect(r).toEqual({ ok: false, error: expect.stringMatching(/57600 baud cannot be reached within tolerance from a 1000000 Hz clock/) });
  });

  it('a clock too slow for the baud', () => {
    // The receiver needs 16 clocks per bit: 115200 baud needs at least 1.8432 MHz.
    const r = generateProbeFiles(small.m, small.syn, small.names, { reset: 'low', clockHz: 1_000_000, baud: 115_200 });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error).toMatch(/needs at least 16 clock cycles per bit \(a clock of 1.8432 MHz or more\)/);
  });

  it('no clock at all, and nonsense numbers', () => {
    const noClock = design(`machine quiet\nin start : bit\nout led : bit = 0\nstate Off initial\n  on start go On\nstate On\n  led = 1\n  go Off\n`);
    const r = generateProbeFiles(noClock.m, noClock.syn, noClock.names, { reset: 'low' });
    expect(r).toEqual({ ok: false, error: expect.stringMatching(/no clock frequency for quiet: give --clock-hz/) });
    const neg = generateProbeFiles(small.m, small.syn, small.names, { reset: 'low', baud: -5 });
    expect(neg).toEqual({ ok: false, error: expect.stringMatching(/baud must be a positive number/) });
  });

  it('a payload wider than a frame can carry', () => {
    // 40 registers of 64 bits = 2560 bits, beyond the 251-byte (2008-bit) payload of docs/probe-protocol.md.
    const regs = Array.from({ length: 40 }, (_, i) => `reg r${i} : u64 reset 0`).join('\n');
    const wide = design(`machine wide\nclock 12 MHz\nin start : bit\nout led : bit = 0\n${regs}\nstate Off initial\n  on start go On with r0 <- r0 + 1\nstate On\n  led = 1\n  go Off\n`);
    const r = generateProbeFiles(wide.m, wide.syn, wide.names, { reset: 'low' });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error).toMatch(/exceeds the 2008-bit limit/);
  });

  it('a good setting gives the files and notes for gen --probe', () => {
    const r = generateProbeFiles(small.m, small.syn, small.names, { reset: 'low' });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.files.map((f) => f.name).sort()).toEqual(['blinker_board.v', 'blinker_dp_probed.v', 'ts_crc16.v', 'ts_frame_packer.v', 'ts_probe_ctrl.v', 'ts_uart_rx.v', 'ts_uart_tx.v']);
    // 12 MHz / 115200 = 104.17 -> divisor 104 (arithmetic by hand).
    expect(r.notes[0]).toMatch(/divisor 104/);
  });
});
