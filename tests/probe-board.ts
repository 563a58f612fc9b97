// Helpers for the probe's tests and bench: build a demo design's board top with the probe, and simulate it in
// Icarus Verilog with a testbench that drives the pins, plays a host script into the receive pin and prints
// every byte seen on the transmit pin.
import { synthesize } from '../core/synth/index';
import type { Synthesis } from '../core/synth/schema';
import type { Machine } from '../core/ir/schema';
import { generateHdl, type HdlFile, type HdlNames } from '../core/hdl/modules';
import { PROBE_RX, PROBE_TX } from '../core/hdl/probe';
import { buildProbe, type ProbeBuild } from '../core/probe/board';
import { loadFixture } from './support/load';
import { runIcarus } from './support/tools';

export type Board = { machine: Machine; rows: bigint[][]; syn: Synthesis; names: HdlNames; build: ProbeBuild; files: Record<string, string> };

/** Clock and baud giving the receiver's minimum of 16 clocks per bit, so simulations stay short. */
export const SIM_CLOCK_HZ = 1_843_200;
export const SIM_BAUD = 115_200;
export const SIM_DIVISOR = 16;
const CLOCK_NS = 10;
export const BIT_NS = SIM_DIVISOR * CLOCK_NS;

export function buildBoard(name: string, opts: { startHalted?: boolean; clockHz?: number; baud?: number } = {}): Board {
  const { machine, rows } = loadFixture(name);
  const s = synthesize(machine, { encoding: 'binary' });
  if (!s.ok) throw new Error(s.error);
  const hdl = generateHdl(machine, s.result, { controller: 'behavioral', reset: 'low' });
  const b = buildProbe(machine, s.result, hdl.names, { reset: 'low', clockHz: opts.clockHz ?? SIM_CLOCK_HZ, baud: opts.baud ?? SIM_BAUD, startHalted: opts.startHalted });
  if (!b.ok) throw new Error(b.error);
  const files: Record<string, string> = {};
  for (const f of [...hdl.files.filter((f) => f.name === `${hdl.names.controller}.v`), ...b.files] as HdlFile[]) files[f.name] = f.text;
  return { machine, rows, syn: s.result, names: hdl.names, build: b, files };
}

/** One step of the host script the testbench plays. */
export type HostAction =
  | { send: Uint8Array }
  /** Wait until this many 0x00 bytes (frame ends) have been seen on the transmit pin in total. */
  | { waitDelimiters: number }
  /** Let this many bit times pass. */
  | { idleBits: number };

/**
 * Simulate the board: pins take row min(k, last) after k clock-enable pulses (the emulator's pin stimulus),
 * the script runs from reset release, and the simulation ends `tailBits` bit times after the script.
 * Returns the bytes from the transmit pin, decoded by a line monitor that samples by time alone.
 */
export function simulateBoard(board: Board, rows: bigint[][], script: HostAction[], tailBits = 400): number[] {
  const m = board.machine;
  const clk = board.names.clock;
  const rst = board.names.reset;
  const top = board.build.top;
  const N = rows.length;
  const L: string[] = [];
  L.push('`timescale 1ns/1ps', 'module tb;');
  L.push(`  localparam integer BIT_NS = ${BIT_NS};`);
  L.push("  reg clk = 1'b0;", `  always #${CLOCK_NS / 2} clk = ~clk;`);
  L.push("  reg rst_n = 1'b0;", "  reg rxd = 1'b1;", '  wire txd;');
  for (const i of m.inputs) L.push(`  reg [${i.type.width - 1}:0] p_${i.name};`, `  reg [${i.type.width - 1}:0] row_${i.name} [0:${N - 1}];`);
  for (const o of m.outputs) L.push(`  wire [${o.type.width - 1}:0] o_${o.name};`);
  const conns = [`.${clk}(clk)`, `.${rst}(rst_n)`, ...m.inputs.map((i) => `.${i.name}(p_${i.name})`), ...m.outputs.map((o) => `.${o.name}(o_${o.name})`), `.${PROBE_TX}(txd)`, `.${PROBE_RX}(rxd)`];
  L.push(`  ${top} dut (${conns.join(', ')});`);
  L.push('  integer ce_count = 0, delims = 0, waited;');
  L.push('  initial begin');
  rows.forEach((r, k) => L.push(`    ${m.inputs.map((i, x) => `row_${i.name}[${k}] = ${i.type.width}'h${r[x].toString(16)};`).join(' ')}`));
  L.push('  end');
  // Pins: row ce_count (the last row once they run out), changed half a clock after each enabled edge.
  L.push('  always @(posedge clk) if (dut.ts_ce) ce_count <= ce_count + 1;');
  L.push('  always @(negedge clk) begin');
  for (const i of m.inputs) L.push(`    p_${i.name} = row_${i.name}[ce_count < ${N} ? ce_count : ${N - 1}];`);
  L.push('  end');
  // Line monitor: independent of the design's clock, it samples each bit at its middle by time.
  L.push('  initial begin : monitor');
  L.push('    reg [7:0] b;', '    integer i;');
  L.push('    forever begin');
  L.push('      @(negedge txd);', '      #(BIT_NS / 2);');
  L.push("      if (txd !== 1'b0) $display(\"ERROR start bit not low at %0t\", $time);");
  L.push('      for (i = 0; i < 8; i = i + 1) begin #(BIT_NS); b[i] = txd; end');
  L.push('      #(BIT_NS);');
  L.push("      if (txd !== 1'b1) $display(\"ERROR stop bit not high at %0t\", $time);");
  L.push('      $display("B %02x", b);');
  L.push("      if (b == 8'h00) delims = delims + 1;");
  L.push('    end');
  L.push('  end');
  // Host side: an 8N1 transmitter on the board's receive pin.
  L.push('  task send(input [7:0] v);', '    integer j;', '    begin');
  L.push("      rxd = 1'b0; #(BIT_NS);", '      for (j = 0; j < 8; j = j + 1) begin rxd = v[j]; #(BIT_NS); end', "      rxd = 1'b1; #(BIT_NS);");
  L.push('    end', '  endtask');
  L.push('  task wait_delims(input integer n);', '    begin');
  L.push('      waited = 0;');
  L.push('      while (delims < n && waited < 200000) begin #(BIT_NS * 10); waited = waited + 1; end');
  L.push('      if (delims < n) begin $display("ERROR timeout waiting for %0d delimiters (have %0d)", n, delims); $finish; end');
  L.push('    end', '  endtask');
  L.push('  initial begin');
  L.push('    repeat (4) @(negedge clk);', "    rst_n = 1'b1;");
  script.forEach((a, k) => {
    if ('send' in a) L.push(`    // action ${k}: send ${a.send.length} bytes`, `    ${[...a.send].map((b) => `send(8'h${b.toString(16).padStart(2, '0')});`).join(' ')}`);
    else if ('waitDelimiters' in a) L.push(`    wait_delims(${a.waitDelimiters});`);
    else L.push(`    #(BIT_NS * ${a.idleBits});`);
  });
  L.push(`    #(BIT_NS * ${tailBits});`);
  L.push('    $display("END %0d", ce_count);', '    $finish;', '  end', 'endmodule');
  const out = runIcarus({ ...board.files, 'tb.v': L.join('\n') + '\n' }, 'tb');
  const lines = out.split('\n');
  const errors = lines.filter((l) => l.startsWith('ERROR'));
  if (errors.length) throw new Error(`testbench: ${errors.join('; ')}`);
  if (!lines.some((l) => l.startsWith('END '))) throw new Error(`testbench did not finish:\n${out.slice(-2000)}`);
  return lines.filter((l) => l.startsWith('B ')).map((l) => parseInt(l.slice(2), 16));
}

/** Rows extended with their last row to `n` rows (the pins hold their last value). */
export function padRows(rows: bigint[][], n: number): bigint[][] {
  return Array.from({ length: Math.max(n, rows.length) }, (_, k) => rows[Math.min(k, rows.length - 1)]);
}
