// The generic Verilog blocks against the Debian tools: Verilator 5 lint (-Wall, Verilog-2001), Icarus Verilog
// compile in -g2001 mode with all warnings, and Yosys (generic synthesis and synth_ice40).
import { describe, expect, it } from 'vitest';
import { protocolVerilogBlocks } from '../core/protocol/verilog/index';
import { runTool, synthIce40, writeBlocks } from './protocol-hdl';

/** Parameter sets each module is linted with (defaults first), to catch width problems at the edges. */
const LINT_PARAMS: Record<string, string[][]> = {
  ts_uart_tx: [[], ['-GDIVISOR=2'], ['-GDIVISOR=868']],
  ts_uart_rx: [[], ['-GDIVISOR=16'], ['-GDIVISOR=100000']],
  ts_crc16: [[], ['-GREFLECTED=1']],
  ts_frame_packer: [[], ['-GPAYLOAD_BITS=1', '-GID_EVERY_LOG2=1'], ['-GPAYLOAD_BITS=64'], ['-GPAYLOAD_BITS=2008']],
  ts_probe_link: [[], ['-GPAYLOAD_BITS=7', '-GDIVISOR=16'], ['-GPAYLOAD_BITS=200']],
};

describe('generic Verilog blocks and the outside tools', () => {
  it('every module is prefixed ts_ and linted', () => {
    expect(protocolVerilogBlocks().map((b) => b.module).sort()).toEqual(Object.keys(LINT_PARAMS).sort());
  });

  for (const [module, sets] of Object.entries(LINT_PARAMS)) {
    it(`${module} is clean under verilator --lint-only -Wall (Verilator, Debian)`, () => {
      const { dir } = writeBlocks(`lint-${module}`);
      for (const params of sets) {
        // Any warning makes verilator exit non-zero, which runTool turns into a failure with the message.
        const { stderr } = runTool('verilator', ['--lint-only', '-Wall', '--language', '1364-2001', '-y', '.', '--top-module', module, ...params, `${module}.v`], dir);
        expect(stderr).toBe('');
      }
    });
  }

  it('compiles in Icarus Verilog -g2001 with -Wall and no warnings (iverilog, Debian)', () => {
    const { dir, files } = writeBlocks('iverilog');
    const { stdout, stderr } = runTool('iverilog', ['-g2001', '-Wall', '-o', 'lib.vvp', ...files], dir);
    expect(stdout + stderr).toBe('');
  });

  it('uses no vendor primitives: Yosys generic synthesis resolves every instance from our own modules', () => {
    const { dir, files } = writeBlocks('generic');
    const { stdout } = runTool('yosys', ['-p', `read_verilog ${files.join(' ')}; hierarchy -check -top ts_probe_link; synth -top ts_probe_link`], dir);
    expect(stdout).not.toMatch(/^Warning:/m);
  });

  it('synthesizes with yosys -p "synth_ice40" at 16, 32 and 64 payload bits', () => {
    for (const bits of [16, 32, 64]) {
      const cells = synthIce40(bits);
      expect(cells.log).not.toMatch(/^Warning:/m);
      expect(cells.luts).toBeGreaterThan(0);
      // COBS stuffing looks ahead in the held frame instead of buffering a run: no block RAM, and the flip-flops
      // stay those of the held payload, the counters and one zero flag per frame byte (two copies).
      expect(cells.blockRams).toBe(0);
      expect(cells.flipFlops).toBeLessThan(400);
    }
  });
});
