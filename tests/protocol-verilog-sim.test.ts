// The Verilog blocks simulated with Icarus Verilog (Debian package iverilog: iverilog + vvp) and compared with
// outside references (CRC catalogue, published COBS examples) and with the TypeScript frame encoder and decoder.
import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { SeededRandom } from '../core/util/prng';
import { FrameDecoder } from '../core/protocol/decoder';
import { encodeCycleFrame, encodeIdFrame, LAYOUT_VERSION, makeLayout, rawCycleFrame, type FrameField } from '../core/protocol/frame';
import { bytesTagged, hexLines, simulate, writeBlocks } from './protocol-hdl';

describe('ts_crc16 in Icarus Verilog', () => {
  /** Feed "123456789" to ts_crc16 one bit per clock, in the bit order the parameter set takes. */
  function checkValue(reflected: boolean): number {
    const { dir, files } = writeBlocks(`crc${reflected ? 'r' : 'u'}`);
    fs.writeFileSync(path.join(dir, 'tb.v'), `\`timescale 1ns/1ns
module tb;
  reg clk = 1'b0;
  always #5 clk = ~clk;
  reg init = 1'b1, enable = 1'b0, data = 1'b0;
  wire [15:0] crc;
  reg [8*9-1:0] text = "123456789";
  integer i, j;
  ts_crc16 #(.REFLECTED(${reflected ? 1 : 0})) dut (.clk(clk), .init(init), .enable(enable), .data(data), .crc(crc));
  initial begin
    @(negedge clk); init = 1'b0; enable = 1'b1;
    for (i = 8; i >= 0; i = i - 1)
      for (j = 0; j < 8; j = j + 1) begin
        data = text[i*8 + ${reflected ? 'j' : '7 - j'}];
        @(negedge clk);
      end
    enable = 1'b0;
    $display("CRC %04x", crc);
    $finish;
  end
endmodule
`);
    return bytesTagged(simulate(dir, [...files, 'tb.v'], 'tb'), 'CRC')[0];
  }

  it('unreflected, bytes MSB first: the catalogue check value of CRC-16/IBM-3740, 0x29B1', () => {
    // Greg Cook's CRC catalogue, CRC-16/IBM-3740: check=0x29b1 (quoted from memory; confirmed in
    // protocol-crc.test.ts against CPython's binascii.crc_hqx).
    expect(checkValue(false)).toBe(0x29b1);
  });

  it('reflected, bytes LSB first: the catalogue check value of CRC-16/MCRF4XX, 0x6F91', () => {
    // Greg Cook's CRC catalogue, CRC-16/MCRF4XX: check=0x6f91 (quoted from memory; it is also CRC-16/X-25's
    // check value 0x906E with X-25's final XOR of 0xFFFF undone).
    expect(checkValue(true)).toBe(0x6f91);
  });
});

type LinkRun = { fields: FrameField[]; frames: bigint[][]; gaps: number[]; idEveryLog2: number; fingerprint: number; divisor: number };

/** Simulate ts_probe_link with a UART line monitor in the testbench; returns the bytes seen on txd. */
function runLink(run: LinkRun): number[] {
  const layout = makeLayout(run.fields);
  const bits = layout.payloadBits;
  const { dir, files } = writeBlocks('link');
  // The testbench builds the payload bus by plain Verilog concatenation {f_n-1, ..., f_0} of per-field words.
  const fieldDecls = run.fields.map((f, i) => `  reg [${f.width - 1}:0] f${i} [0:NF-1];\n  initial $readmemh("f${i}.hex", f${i});`).join('\n');
  const concat = `{${run.fields.map((_, i) => `f${i}[k]`).reverse().join(', ')}}`;
  run.fields.forEach((f, i) => fs.writeFileSync(path.join(dir, `f${i}.hex`), hexLines(run.frames.map((r) => r[i]), Math.ceil(f.width / 4))));
  fs.writeFileSync(path.join(dir, 'gaps.hex'), hexLines(run.gaps, 2));
  const bitNs = run.divisor * 10;
  fs.writeFileSync(path.join(dir, 'tb.v'), `\`timescale 1ns/1ns
module tb;
  localparam integer NF = ${run.frames.length};
  localparam integer BIT_NS = ${bitNs};
  reg clk = 1'b0;
  always #5 clk = ~clk;
  reg rst = 1'b1, start = 1'b0;
  reg [${bits - 1}:0] payload = 0;
  reg [6:0] cycle = 7'd0;
  wire ready, txd, rx_valid, rx_error;
  wire [7:0] rx_data;
${fieldDecls}
  reg [7:0] gap [0:NF-1];
  initial $readmemh("gaps.hex", gap);
  integer k;
  time last_edge = 0;

  ts_probe_link #(.PAYLOAD_BITS(${bits}), .FINGERPRINT(32'h${run.fingerprint.toString(16).padStart(8, '0')}),
    .DIVISOR(${run.divisor}), .ID_EVERY_LOG2(${run.idEveryLog2})) dut (
    .clk(clk), .rst(rst), .start(start), .payload(payload), .cycle(cycle), .ready(ready), .txd(txd),
    .rxd(1'b1), .rx_data(rx_data), .rx_valid(rx_valid), .rx_error(rx_error));

  // UART line monitor, independent of the design's clock: find the start bit's falling edge, then sample
  // each bit at its middle by time alone, check the stop bit, and print the byte.
  initial begin : monitor
    reg [7:0] b;
    integer i;
    forever begin
      @(negedge txd);
      #(BIT_NS / 2);
      if (txd !== 1'b0) $display("ERROR start bit not low at %0t", $time);
      for (i = 0; i < 8; i = i + 1) begin
        #(BIT_NS);
        b[i] = txd;
      end
      #(BIT_NS);
      if (txd !== 1'b1) $display("ERROR stop bit not high at %0t", $time);
      $display("B %02x", b);
      last_edge = $time;
    end
  end

  initial begin
    repeat (3) @(negedge clk);
    rst = 1'b0;
    for (k = 0; k < NF; k = k + 1) begin
      repeat (gap[k]) @(negedge clk);
      payload = ${concat};
      cycle = k;
      start = 1'b1;
      while (!ready) @(negedge clk);
      @(negedge clk);  // the rising edge just passed took the frame
      start = 1'b0;
      payload = ~payload;  // the packer must have latched its copy
      cycle = ~cycle;
    end
    // Wait until the line has been quiet for 30 character times.
    while ($time - last_edge < 300 * BIT_NS || !ready) #(BIT_NS);
    $finish;
  end
endmodule
`);
  const lines = simulate(dir, [...files, 'tb.v'], 'tb');
  expect(lines.filter((l) => l.startsWith('ERROR'))).toEqual([]);
  return bytesTagged(lines, 'B');
}

/** The wire bytes the TypeScript encoder says the link must send. */
function expectedStream(run: LinkRun): number[] {
  const layout = makeLayout(run.fields);
  const out: number[] = [];
  run.frames.forEach((values, k) => {
    if (k % 2 ** run.idEveryLog2 === 0) {  // the packer keys on the low counter bits
      out.push(...encodeIdFrame({ fingerprint: run.fingerprint, layoutVersion: LAYOUT_VERSION, payloadBits: layout.payloadBits, nextCounter: k % 128, afterReset: k === 0 }));
    }
    out.push(...encodeCycleFrame(layout, k, values));
  });
  return out;
}

function randomRun(seed: number, fields: FrameField[], count: number, idEveryLog2: number, divisor: number): LinkRun {
  const rng = new SeededRandom(seed);
  const frames = Array.from({ length: count }, (_, k) =>
    fields.map((f) => {
      // Mix in all-zero and all-one values so the stuffing sees runs of zeros and long non-zero runs.
      const pick = rng.below(4);
      if (pick === 0) return 0n;
      if (pick === 1) return (1n << BigInt(f.width)) - 1n;
      return k === 0 ? 0n : rng.bits(f.width);
    }),
  );
  const gaps = Array.from({ length: count }, () => (rng.below(3) === 0 ? rng.below(200) : 0));
  return { fields, frames, gaps, idEveryLog2, fingerprint: rng.nextU32(), divisor };
}

describe('ts_probe_link (packer + CRC + COBS + UART TX) in Icarus Verilog', () => {
  it('sends exactly the bytes of encodeCycleFrame/encodeIdFrame, and the decoder gets the frames back', () => {
    const fields = [
      { name: 'state', width: 3 },
      { name: 'count', width: 13 },
      { name: 'flag', width: 1 },
      { name: 'wide', width: 20 },
    ];
    const run = randomRun(2024, fields, 40, 3, 16);
    const got = runLink(run);
    expect(got).toEqual(expectedStream(run));
    const layout = makeLayout(fields);
    const decoder = new FrameDecoder(layout, { expectedFingerprint: run.fingerprint });
    const events = decoder.push(new Uint8Array(got));
    const cyclesOut = events.filter((e) => e.kind === 'cycle');
    expect(cyclesOut.map((e) => (e.kind === 'cycle' ? e.values : []))).toEqual(run.frames);
    expect(cyclesOut.map((e) => (e.kind === 'cycle' ? e.counter : -1))).toEqual(run.frames.map((_, k) => k % 128));
    expect(decoder.stats).toMatchObject({ idFrames: 5, crcErrors: 0, framingErrors: 0, droppedFrames: 0, idMismatches: 0 });
  });

  it('handles whole-byte and 64-bit payloads, the counter wrap and the default identification period', () => {
    const fields = [
      { name: 'a', width: 64 },
      { name: 'b', width: 8 },
    ];
    const run = randomRun(77, fields, 260, 7, 16);
    const got = runLink(run);
    expect(got).toEqual(expectedStream(run));
    const decoder = new FrameDecoder(makeLayout(fields), { expectedFingerprint: run.fingerprint });
    decoder.push(new Uint8Array(got));
    expect(decoder.stats).toMatchObject({ cycleFrames: 260, idFrames: 3, crcErrors: 0, framingErrors: 0, droppedFrames: 0, idMismatches: 0 });
  });

  it('works with a 1-bit payload', () => {
    const run = randomRun(5, [{ name: 'only', width: 1 }], 12, 2, 20);
    expect(runLink(run)).toEqual(expectedStream(run));
  });

  it('stuffs frames whose CRC bytes are zero, and frames without any zero byte', () => {
    // Payloads picked so that frame 1 ends in a 0x00 CRC low byte, frame 2 has a 0x00 CRC high byte and frame 3
    // has no zero byte at all. COBS (Cheshire and Baker, 1999) then ends frame 1 with an empty run, code 0x01,
    // and sends frame 3 as one run whose code is its length + 1.
    const fields = [{ name: 'v', width: 16 }];
    const layout = makeLayout(fields);
    const find = (k: number, ok: (raw: Uint8Array) => boolean): bigint => {
      for (let v = 1n; v < 0x10000n; v++) if (ok(rawCycleFrame(layout, k, [v]))) return v;
      throw new Error(`no payload for frame ${k}`);
    };
    const frames = [
      [0n],
      [find(1, (r) => r[4] === 0 && r[3] !== 0 && r[1] !== 0 && r[2] !== 0)],
      [find(2, (r) => r[3] === 0 && r[4] !== 0 && r[1] !== 0 && r[2] !== 0)],
      [find(3, (r) => r.every((b) => b !== 0))],
    ];
    const run: LinkRun = { fields, frames, gaps: [0, 0, 30, 0], idEveryLog2: 7, fingerprint: 0x0102_0304, divisor: 16 };
    const got = runLink(run);
    expect(got).toEqual(expectedStream(run));
    const wire = frames.map((values, k) => [...encodeCycleFrame(layout, k, values)]);
    expect(wire[1].slice(-2)).toEqual([0x01, 0x00]);
    expect(wire[3][0]).toBe(6); // 5 raw bytes, no zero: one run
  });

  it('sends the longest frame, 2008 payload bits, as a single full run (code 0xFF)', () => {
    // 2008 bits = 251 payload bytes: with the header and the CRC a 254-byte frame, the longest one COBS code can
    // cover. Frame 1 is all ones with header 0x01: no zero byte unless the CRC has one.
    const fields = [...Array.from({ length: 31 }, (_, i) => ({ name: `w${i}`, width: 64 })), { name: 'tail', width: 24 }];
    const ones = fields.map((f) => (1n << BigInt(f.width)) - 1n);
    const run: LinkRun = { fields, frames: [ones, ones, fields.map(() => 0n)], gaps: [0, 0, 0], idEveryLog2: 7, fingerprint: 0xfeed_0001, divisor: 16 };
    const got = runLink(run);
    expect(got).toEqual(expectedStream(run));
    // Its CRC bytes happen to be non-zero too, so COBS sends code 0xFF, the 254 bytes and the delimiter.
    expect(rawCycleFrame(makeLayout(fields), 1, ones).every((b) => b !== 0)).toBe(true);
    const frame1 = [...encodeCycleFrame(makeLayout(fields), 1, ones)];
    expect([frame1[0], frame1.length]).toEqual([0xff, 256]);
    expect(got.filter((b) => b === 0xff).length).toBeGreaterThan(2 * 251);
  });
});

describe('ts_uart_rx in Icarus Verilog', () => {
  it('receives bytes sent 2% fast and 2% slow, flags a missing stop bit and ignores a glitch; strobes each data bit', () => {
    const divisor = 16;
    const clockNs = 10;
    const bytes = [0x00, 0xff, 0x55, 0xaa, 0x01, 0x80, 0x3c, 0xc3];
    const { dir, files } = writeBlocks('rx');
    // Characters are driven by time from the testbench at bit periods 2% shorter, then 2% longer, than nominal.
    fs.writeFileSync(path.join(dir, 'tb.v'), `\`timescale 1ns/1ps
module tb;
  reg clk = 1'b0;
  always #${clockNs / 2} clk = ~clk;
  reg rst = 1'b1, rxd = 1'b1;
  wire [7:0] data;
  wire valid, frame_error, bit_strobe, bit_data;
  ts_uart_rx #(.DIVISOR(${divisor})) dut (.clk(clk), .rst(rst), .rxd(rxd), .data(data), .valid(valid), .frame_error(frame_error),
    .bit_strobe(bit_strobe), .bit_data(bit_data));
  // The bit strobes, gathered eight at a time, LSB first.
  reg [7:0] bits = 8'h00;
  integer nbits = 0;
  always @(posedge clk) begin
    if (valid) $display("B %02x", data);
    if (frame_error) $display("E 00");
    if (bit_strobe) begin
      bits = {bit_data, bits[7:1]};
      nbits = nbits + 1;
      if (nbits % 8 == 0) $display("S %02x", bits);
    end
  end
  task send(input [7:0] b, input real bit_ns, input stop);
    integer i;
    begin
      rxd = 1'b0; #(bit_ns);
      for (i = 0; i < 8; i = i + 1) begin rxd = b[i]; #(bit_ns); end
      rxd = stop; #(bit_ns);
      rxd = 1'b1; #(bit_ns);
    end
  endtask
  reg [7:0] vec [0:${bytes.length - 1}];
  integer k;
  initial begin
${bytes.map((b, i) => `    vec[${i}] = 8'h${b.toString(16)};`).join('\n')}
    #100 rst = 1'b0;
    #100;
    for (k = 0; k < ${bytes.length}; k = k + 1) send(vec[k], ${divisor * clockNs} * 0.98, 1'b1);
    for (k = 0; k < ${bytes.length}; k = k + 1) send(vec[k], ${divisor * clockNs} * 1.02, 1'b1);
    send(8'h5a, ${divisor * clockNs}, 1'b0);   // stop bit low: a framing error, no byte
    #(${divisor * clockNs * 4});
    rxd = 1'b0; #(${clockNs * 3}); rxd = 1'b1;  // a glitch shorter than half a bit
    #(${divisor * clockNs * 12});
    send(8'h42, ${divisor * clockNs}, 1'b1);
    #(${divisor * clockNs * 4});
    $finish;
  end
endmodule
`);
    const lines = simulate(dir, [...files, 'tb.v'], 'tb');
    const hex = (b: number) => b.toString(16).padStart(2, '0');
    expect(lines.filter((l) => /^[BE] /.test(l))).toEqual([...bytes, ...bytes].map((b) => `B ${hex(b)}`).concat(['E 00', 'B 42']));
    // Every character with a real start bit strobes its 8 data bits, the one with the low stop bit too.
    expect(lines.filter((l) => l.startsWith('S '))).toEqual([...bytes, ...bytes, 0x5a, 0x42].map((b) => `S ${hex(b)}`));
  });
});
