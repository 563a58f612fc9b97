// The Verilog blocks simulated with Icarus Verilog (Debian package iverilog: iverilog + vvp) and compared with
// outside references (CRC catalogue, published COBS examples) and with the TypeScript frame encoder and decoder.
import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { SeededRandom } from '../core/util/prng';
import { FrameDecoder } from '../core/protocol/decoder';
import { encodeCycleFrame, encodeIdFrame, LAYOUT_VERSION, makeLayout, type FrameField } from '../core/protocol/frame';
import { COBS_PUBLISHED } from './protocol-vectors';
import { bytesTagged, hexLines, simulate, writeBlocks } from './protocol-hdl';

describe('ts_crc16 in Icarus Verilog', () => {
  it('gives the catalogue check value 0x29B1 for "123456789"', () => {
    // Greg Cook's CRC catalogue, CRC-16/IBM-3740: check=0x29b1 (quoted from memory; confirmed in
    // protocol-crc.test.ts against CPython's binascii.crc_hqx).
    const { dir, files } = writeBlocks('crc');
    fs.writeFileSync(path.join(dir, 'tb.v'), `\`timescale 1ns/1ns
module tb;
  reg clk = 1'b0;
  always #5 clk = ~clk;
  reg init = 1'b1, enable = 1'b0;
  reg [7:0] data = 8'h00;
  wire [15:0] crc;
  reg [8*9-1:0] text = "123456789";
  integer i;
  ts_crc16 dut (.clk(clk), .init(init), .enable(enable), .data(data), .crc(crc));
  initial begin
    @(negedge clk); init = 1'b0; enable = 1'b1;
    for (i = 8; i >= 0; i = i - 1) begin
      data = text[i*8 +: 8];
      @(negedge clk);
    end
    enable = 1'b0;
    $display("CRC %04x", crc);
    $finish;
  end
endmodule
`);
    const lines = simulate(dir, [...files, 'tb.v'], 'tb');
    expect(bytesTagged(lines, 'CRC')).toEqual([0x29b1]);
  });
});

describe('ts_cobs_stuffer in Icarus Verilog', () => {
  it('stuffs the published COBS examples back to back, under random output back-pressure', () => {
    // Expected output: the examples reproduced in the Wikipedia COBS article (see protocol-vectors.ts), each
    // followed by the 0x00 delimiter the stuffer appends.
    const { dir, files } = writeBlocks('cobs');
    const input: number[] = [];
    for (const ex of COBS_PUBLISHED) ex.data.forEach((b, i) => input.push(b | (i === ex.data.length - 1 ? 0x100 : 0)));
    fs.writeFileSync(path.join(dir, 'input.hex'), hexLines(input, 3));
    fs.writeFileSync(path.join(dir, 'tb.v'), `\`timescale 1ns/1ns
module tb;
  localparam integer N = ${input.length};
  reg clk = 1'b0;
  always #5 clk = ~clk;
  reg rst = 1'b1;
  reg [8:0] stream [0:N-1];
  integer next = 0, seed = 7;
  wire [7:0] out_data;
  wire in_ready, out_valid;
  reg out_ready = 1'b0;
  wire in_valid = (next < N);
  wire [8:0] word = in_valid ? stream[next] : 9'h000;
  ts_cobs_stuffer dut (.clk(clk), .rst(rst), .in_data(word[7:0]), .in_valid(in_valid), .in_last(word[8]),
    .in_ready(in_ready), .out_data(out_data), .out_valid(out_valid), .out_ready(out_ready));
  initial $readmemh("input.hex", stream);
  always @(posedge clk) begin
    if (!rst) begin
      if (in_valid && in_ready) next <= next + 1;
      if (out_valid && out_ready) $display("B %02x", out_data);
    end
  end
  // The receiving side accepts on about two cycles in three.
  always @(negedge clk) out_ready <= ($random(seed) % 3) != 0;
  initial begin
    repeat (3) @(negedge clk);
    rst = 1'b0;
    wait (next == N);
    repeat (2000) @(negedge clk);
    $finish;
  end
endmodule
`);
    const got = bytesTagged(simulate(dir, [...files, 'tb.v'], 'tb'), 'B');
    const expected = COBS_PUBLISHED.flatMap((ex) => [...ex.encoded, 0x00]);
    expect(got).toEqual(expected);
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
      // Mix in all-zero and all-one values so the stuffer sees runs of zeros and long non-zero runs.
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
});

describe('ts_uart_rx in Icarus Verilog', () => {
  it('receives bytes sent 2% fast and 2% slow, flags a missing stop bit and ignores a glitch', () => {
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
  wire valid, frame_error;
  ts_uart_rx #(.DIVISOR(${divisor})) dut (.clk(clk), .rst(rst), .rxd(rxd), .data(data), .valid(valid), .frame_error(frame_error));
  always @(posedge clk) begin
    if (valid) $display("B %02x", data);
    if (frame_error) $display("E 00");
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
    expect(lines.filter((l) => /^[BE] /.test(l))).toEqual([...bytes, ...bytes].map((b) => `B ${b.toString(16).padStart(2, '0')}`).concat(['E 00', 'B 42']));
  });
});
