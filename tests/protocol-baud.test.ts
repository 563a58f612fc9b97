// Baud planning: divisors, actual baud and error for common clocks, worked by hand, and clear failures.
// A divisor from baudPlan is also run through Icarus Verilog (TX into RX) at the edge of the tolerance.
import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { baudPlan, BAUD_TOLERANCE } from '../core/protocol/baud';
import { bytesTagged, simulate, writeBlocks } from './protocol-hdl';

function plan(clock: number, baud: number, receiver = true) {
  const r = baudPlan(clock, baud, { receiver });
  if (!r.ok) throw new Error(r.error);
  return r.plan;
}

describe('baudPlan', () => {
  it('computes divisor, actual baud and error (worked by hand)', () => {
    // 12 MHz / 115200 = 104.1667 -> 104; 12e6 / 104 = 115384.6 baud, +0.16%.
    const a = plan(12e6, 115200);
    expect(a.divisor).toBe(104);
    expect(a.actualBaud).toBeCloseTo(115384.615, 2);
    expect(a.relativeError).toBeCloseTo(0.0016026, 6);
    expect(a.warnings).toEqual([]);
    // 100 MHz / 115200 = 868.06 -> 868; +0.0064%.
    expect(plan(100e6, 115200).divisor).toBe(868);
    // 1.8432 MHz is the classic UART crystal, exactly 16 x 115200 (common practice): divisor 16, no error.
    const c = plan(1.8432e6, 115200);
    expect(c.divisor).toBe(16);
    expect(c.relativeError).toBe(0);
  });

  it('warns beyond the 2% one-end budget (common-practice figure)', () => {
    expect(BAUD_TOLERANCE).toBe(0.02);
    // 2 MHz / 115200 = 17.36 -> 17; 2e6 / 17 = 117647 baud, +2.12%.
    const p = plan(2e6, 115200);
    expect(p.divisor).toBe(17);
    expect(p.warnings).toHaveLength(1);
    expect(p.warnings[0]).toContain('2.12% off 115200');
  });

  it('fails clearly when the clock cannot reach the baud', () => {
    const r = baudPlan(12e6, 921600);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error).toBe('baud plan: a 12 MHz clock cannot reach 921600 baud: the receiver needs at least 16 clock cycles per bit (a clock of 14.7456 MHz or more), but there would be 13.02');
    // The transmitter alone needs only 2 cycles per bit.
    expect(plan(12e6, 921600, false).divisor).toBe(13);
    const t = baudPlan(1e6, 1e6, { receiver: false });
    expect(t.ok).toBe(false);
    if (!t.ok) expect(t.error).toContain('the transmitter needs at least 2 clock cycles per bit');
    for (const [clk, baud] of [[0, 9600], [-1, 9600], [Number.NaN, 9600], [12e6, 0], [12e6, Number.POSITIVE_INFINITY]]) {
      const bad = baudPlan(clk, baud);
      expect(bad.ok).toBe(false);
      if (!bad.ok) expect(bad.error).toMatch(/^baud plan: the (clock frequency|baud) must be a positive/);
    }
  });

  it('gives a divisor that links ts_uart_tx to a receiver running 2% slower (Icarus Verilog)', () => {
    // Transmitter at the planned divisor; the receiver's clock runs 2% slow, the whole one-end budget.
    const p = plan(1.8432e6 * 2, 115200);
    const { dir, files } = writeBlocks('baud');
    const txNs = 1e9 / p.clockHz;
    const rxNs = txNs * 1.02;
    const bytes = [0x00, 0xff, 0x5a, 0xa5, 0x81];
    fs.writeFileSync(path.join(dir, 'tb.v'), `\`timescale 1ns/1ps
module tb;
  reg tx_clk = 1'b0, rx_clk = 1'b0;
  always #(${txNs / 2}) tx_clk = ~tx_clk;
  always #(${rxNs / 2}) rx_clk = ~rx_clk;
  reg rst = 1'b1;
  wire advance, line, rx_valid, rx_error;
  wire [7:0] rx_data;
  reg [7:0] vec [0:${bytes.length - 1}];
  // The byte source: byte k, bit bit_no, offered until the transmitter has read all of them.
  integer k = 0;
  reg [2:0] bit_no = 3'd0;
  wire valid = !rst && k < ${bytes.length};
  wire [7:0] data = vec[k < ${bytes.length} ? k : 0];
  ts_uart_tx #(.DIVISOR(${p.divisor})) tx (.clk(tx_clk), .rst(rst), .valid(valid), .data_bit(data[bit_no]), .last(bit_no == 3'd7),
    .advance(advance), .txd(line));
  ts_uart_rx #(.DIVISOR(${p.divisor})) rx (.clk(rx_clk), .rst(rst), .rxd(line), .data(rx_data), .valid(rx_valid), .frame_error(rx_error),
    .bit_strobe(), .bit_data());
  always @(posedge tx_clk) if (advance) begin
    bit_no <= bit_no + 3'd1;
    if (bit_no == 3'd7) k <= k + 1;
  end
  always @(posedge rx_clk) begin
    if (rx_valid) $display("B %02x", rx_data);
    if (rx_error) $display("E 00");
  end
  initial begin
${bytes.map((b, i) => `    vec[${i}] = 8'h${b.toString(16)};`).join('\n')}
    #1000 rst = 1'b0;
    wait (k == ${bytes.length});
    #(${Math.ceil(1e9 / p.actualBaud) * 30});
    $finish;
  end
endmodule
`);
    const lines = simulate(dir, [...files, 'tb.v'], 'tb');
    expect(lines.filter((l) => l.startsWith('E '))).toEqual([]);
    expect(bytesTagged(lines, 'B')).toEqual(bytes);
  });
});
