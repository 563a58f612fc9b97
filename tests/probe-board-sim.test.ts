// The generated board top with the probe, simulated in Icarus Verilog (Debian package iverilog: iverilog + vvp):
// the bytes on its transmit pin, decoded by FrameDecoder, equal the golden model cycle for cycle and equal the
// board emulator's bytes exactly; host commands sent into its receive pin take effect on the cycle they should.
import { describe, expect, it } from 'vitest';
import { FrameDecoder, type DecodedEvent } from '../core/protocol/decoder';
import { encodeCommand, type HostCommand } from '../core/protocol/commands';
import { BoardEmulator } from '../core/probe/emulator';
import { simulate } from '../core/model/trace';
import { randomStimulus } from '../core/model/stimulus';
import { cobsEncode } from '../core/protocol/cobs';
import { commandCrc, rawCommand } from '../core/protocol/commands';
import { evalExpr } from '../core/ir/eval';
import { fixtureNames } from './support/load';
import { buildBoard, padRows, simulateBoard, BIT_NS, type Board, type HostAction } from './probe-board';
import { CommandDecoder, encodeCommand as encodeCmd, inputVector } from '../core/protocol/commands';
import { probeBlockFiles } from '../core/probe/board';
import { SeededRandom } from '../core/util/prng';
import { runIcarus } from './support/tools';

/** Frame values the golden model gives for these rows; status bits by the reference evaluator. */
function golden(b: Board, rows: bigint[][]): bigint[][] {
  const { machine: m, syn } = b;
  return simulate(m, rows).map((t) => {
    const env = { input: (n: string) => t.inputs[m.inputs.findIndex((i) => i.name === n)], reg: (n: string) => t.regs[m.registers.findIndex((r) => r.name === n)] };
    return [
      ...t.inputs,
      BigInt(parseInt(syn.encoding.codes[t.state], 2)),
      ...t.regs,
      ...syn.datapath.statusSignals.map((s) => evalExpr(s.expr, env)),
      ...m.outputs.flatMap((o, i) => (o.type.width === 1 ? [t.outputs[i]] : [])),
    ];
  });
}

function decode(b: Board, bytes: number[]): { events: DecodedEvent[]; decoder: FrameDecoder } {
  const decoder = new FrameDecoder(b.build.layout.frame, { expectedFingerprint: b.build.layout.fingerprint });
  return { events: decoder.push(Uint8Array.from(bytes)), decoder };
}

const cycles = (events: DecodedEvent[]) => events.flatMap((e) => (e.kind === 'cycle' ? [e] : []));
const zeros = (bytes: ArrayLike<number>) => Array.from(bytes).filter((x) => x === 0).length;

describe('board top with probe in Icarus Verilog, pins driven, running from reset', () => {
  for (const name of fixtureNames()) {
    it(`${name}: frames equal the golden model and the bytes equal the emulator's`, () => {
      const b = buildBoard(name);
      const N = b.rows.length;
      // How many frame ends the first N cycles make, from the emulator; the simulation runs until then.
      const ahead = new BoardEmulator({ machine: b.machine, synthesis: b.syn, layout: b.build.layout, stimulus: b.rows }).produce(1 << 30);
      const bytes = simulateBoard(b, b.rows, [{ waitDelimiters: zeros(ahead) }], 0);
      const { events, decoder } = decode(b, bytes);
      expect(decoder.stats).toMatchObject({ crcErrors: 0, framingErrors: 0, droppedFrames: 0, idMismatches: 0 });
      const got = cycles(events);
      expect(got.length).toBeGreaterThanOrEqual(N);
      expect(got.slice(0, N).map((e) => e.values)).toEqual(golden(b, b.rows));
      expect(got.map((e) => e.counter)).toEqual(got.map((_, k) => k % 128));
      // Byte for byte: the emulator, pins holding their last row, run for as many cycles as the board sent.
      const emu = new BoardEmulator({ machine: b.machine, synthesis: b.syn, layout: b.build.layout, stimulus: padRows(b.rows, got.length) });
      const expected = [...emu.produce(1 << 30)];
      const complete = bytes.slice(0, bytes.lastIndexOf(0) + 1);
      expect(complete).toEqual(expected);
    });
  }
});

describe('board top with probe in Icarus Verilog, a longer random run', () => {
  it('300 random cycles: identification frames at each counter wrap, bytes equal the emulator', () => {
    const b = buildBoard('bottle_capper');
    const rows = randomStimulus(b.machine, 300, 77);
    const ahead = new BoardEmulator({ machine: b.machine, synthesis: b.syn, layout: b.build.layout, stimulus: rows }).produce(1 << 30);
    const bytes = simulateBoard(b, rows, [{ waitDelimiters: zeros(ahead) }], 0);
    const { events } = decode(b, bytes);
    const got = cycles(events);
    expect(got.slice(0, 300).map((e) => e.values)).toEqual(golden(b, rows));
    // docs/probe-protocol.md: an identification frame before cycle frames 0, 128 and 256.
    const idBefore = events.flatMap((e, i) => (e.kind === 'id' ? [cycles(events.slice(0, i)).length] : []));
    expect(idBefore.filter((k) => k <= 300)).toEqual([0, 128, 256]);
    const emu = new BoardEmulator({ machine: b.machine, synthesis: b.syn, layout: b.build.layout, stimulus: padRows(rows, got.length) });
    expect(bytes.slice(0, bytes.lastIndexOf(0) + 1)).toEqual([...emu.produce(1 << 30)]);
  });
});

describe('board top with probe in Icarus Verilog, host commands', () => {
  it('halt, step N, host inputs, reset and run take effect on the right cycle; bytes equal the emulator', () => {
    const b = buildBoard('tank_dosing', { startHalted: true });
    const m = b.machine;
    const vec = new BoardEmulator({ machine: m, synthesis: b.syn }).vector;
    const cmd = (c: HostCommand) => encodeCommand(c, vec);
    const pins = padRows(b.rows, 4000);
    const hostRows = b.rows.slice(0, 10).map((r) => r.slice());
    // The host drives a dose run by itself: start with dose 4, then flow pulses.
    hostRows[0] = [1n, 0n, 4n, 0n];
    for (let k = 1; k < hostRows.length; k++) hostRows[k] = [0n, BigInt(k % 2), 0n, 0n];

    // The emulator tells how many frame ends each phase makes; the testbench waits for them.
    const emu = new BoardEmulator({ machine: m, synthesis: b.syn, layout: b.build.layout, stimulus: pins, startHalted: true });
    const script: HostAction[] = [];
    let delims = 0;
    const phase = (sends: HostCommand[], maxCycles = Infinity) => {
      for (const c of sends) {
        script.push({ send: cmd(c) });
        emu.receive(cmd(c));
      }
      delims += zeros(emu.produce(1 << 30, maxCycles));
      script.push({ waitDelimiters: delims });
    };
    script.push({ idleBits: 400 }); // halted from the start: nothing may come
    // A step command with one bit flipped, and line garbage: the board must ignore both (CRC, COBS).
    const damaged = rawCommand({ kind: 'step', cycles: 3 }, vec);
    damaged[1] ^= 0x04;
    const junk = Uint8Array.from([0, ...cobsEncode(damaged), 0, 0x37, 0x99, 0x05]);
    script.push({ send: junk }, { idleBits: 300 });
    expect(emu.receive(junk).map((e) => e.kind)).toEqual(['error']);
    phase([{ kind: 'step', cycles: 3 }]);
    script.push({ idleBits: 300 }); // and nothing after the three
    phase([{ kind: 'host-inputs', on: true }]);
    for (const r of hostRows) phase([{ kind: 'inputs', values: r }, { kind: 'step', cycles: 1 }]);
    phase([{ kind: 'reset' }, { kind: 'step', cycles: 2 }]);
    const beforeRun = emu.stats.cycleFrames;
    script.push({ send: cmd({ kind: 'host-inputs', on: false }) }, { send: cmd({ kind: 'run' }) }, { idleBits: 1500 }, { send: cmd({ kind: 'halt' }) });

    const bytes = simulateBoard(b, pins, script, 800);
    const { events, decoder } = decode(b, bytes);
    expect(decoder.stats).toMatchObject({ crcErrors: 0, framingErrors: 0, droppedFrames: 0, idMismatches: 0 });
    const frames = cycles(events);

    // Phase by phase, against the golden model.
    expect(events[0]).toMatchObject({ kind: 'id', info: { afterReset: true, nextCounter: 0 } });
    const firstFive = golden(b, [...pins.slice(0, 3), ...hostRows]);
    expect(frames.slice(0, 13).map((f) => f.values)).toEqual(firstFive); // 3 pin cycles, then 10 host-driven ones
    expect(frames.slice(0, 13).map((f) => f.counter)).toEqual([...Array(13).keys()]);
    const afterReset = frames.slice(13, 15);
    expect(afterReset.map((f) => f.counter)).toEqual([0, 1]);
    const last = hostRows[hostRows.length - 1];
    expect(afterReset.map((f) => f.values)).toEqual(golden(b, [last, last]));
    const idAfterReset = events.findIndex((e, i) => i > 0 && e.kind === 'id' && e.info.afterReset);
    expect(events[idAfterReset + 1]).toBe(afterReset[0]);
    // Free run on the pins (row index continues at 15), then halt: the frames are consecutive and stop.
    const run = frames.slice(15);
    expect(run.length).toBeGreaterThan(5);
    const runRows = pins.slice(15, 15 + run.length);
    expect(run.map((f) => f.values)).toEqual(golden(b, [last, last, ...runRows]).slice(2));
    expect(run.map((f) => f.counter)).toEqual(run.map((_, k) => (k + 2) % 128));
    // The line went quiet after the halt: the last byte is a delimiter and nothing was cut off.
    expect(bytes[bytes.length - 1]).toBe(0);

    // The emulator, given the same commands and as many free-running cycles, sends the same bytes.
    emu.receive(cmd({ kind: 'host-inputs', on: false }));
    emu.receive(cmd({ kind: 'run' }));
    emu.produce(1 << 30, frames.length - beforeRun);
    emu.receive(cmd({ kind: 'halt' }));
    const replay = new BoardEmulator({ machine: m, synthesis: b.syn, layout: b.build.layout, stimulus: pins, startHalted: true });
    replay.receive(Uint8Array.from([0, ...cobsEncode(damaged), 0, 0x37, 0x99, 0x05]));
    const all: number[] = [];
    const feed = (c: HostCommand, maxCycles = Infinity) => {
      replay.receive(cmd(c));
      all.push(...replay.produce(1 << 30, maxCycles));
    };
    feed({ kind: 'step', cycles: 3 });
    feed({ kind: 'host-inputs', on: true });
    for (const r of hostRows) {
      replay.receive(cmd({ kind: 'inputs', values: r }));
      feed({ kind: 'step', cycles: 1 });
    }
    replay.receive(cmd({ kind: 'reset' }));
    feed({ kind: 'step', cycles: 2 });
    replay.receive(cmd({ kind: 'host-inputs', on: false }));
    feed({ kind: 'run' }, frames.length - beforeRun);
    feed({ kind: 'halt' });
    expect(bytes).toEqual(all);
  });
});

/** A testbench around ts_probe_ctrl alone: a host UART on rxd playing `body` (Verilog statements using send(byte)). */
function ctrlBench(inBits: number, monitor: string, body: string): string[] {
  const w = Math.max(1, inBits);
  const tb = `\`timescale 1ns/1ps
module tb;
  localparam integer BIT_NS = ${BIT_NS};
  reg clk = 1'b0;
  always #5 clk = ~clk;
  reg rst = 1'b1, rxd = 1'b1;
  wire [${w - 1}:0] inputs;
  wire ce, design_rst, txd;
  integer ce_count = 0;
  ts_probe_ctrl #(.IN_BITS(${inBits}), .PAYLOAD_BITS(1), .DIVISOR(16), .START_HALTED(1)) dut (
    .clk(clk), .rst(rst), .pins(${w}'d0), .inputs(inputs), .payload(1'b1), .ce(ce), .design_rst(design_rst), .txd(txd), .rxd(rxd));
  always @(posedge clk) if (ce) ce_count <= ce_count + 1;
${monitor}
  task send(input [7:0] v);
    integer j;
    begin
      rxd = 1'b0; #(BIT_NS);
      for (j = 0; j < 8; j = j + 1) begin rxd = v[j]; #(BIT_NS); end
      rxd = 1'b1; #(BIT_NS);
    end
  endtask
  initial begin
    repeat (4) @(negedge clk);
    rst = 1'b0;
${body}
    #(BIT_NS * 20);
    $display("END %0d", ce_count);
    $finish;
  end
endmodule
`;
  const files = Object.fromEntries(probeBlockFiles().map((f) => [f.name, f.text]));
  const out = runIcarus({ ...files, 'tb.v': tb }, 'tb').split('\n');
  expect(out.some((l) => l.startsWith('END '))).toBe(true);
  return out;
}

const sendBytes = (bytes: Iterable<number>) => [...bytes].map((b) => `send(8'h${b.toString(16).padStart(2, '0')});`).join(' ');

describe('ts_probe_ctrl command receiver in Icarus Verilog against CommandDecoder', () => {
  /** Segments meant to trip a receiver up, each with a valid CRC where that matters. */
  function crafted(v: ReturnType<typeof inputVector>): number[] {
    const withCrc = (body: number[]) => {
      const raw = Uint8Array.from([...body, 0, 0]);
      const crc = commandCrc(raw, 0, body.length);
      raw[body.length] = crc & 0xff;
      raw[body.length + 1] = crc >> 8;
      return raw;
    };
    const good = (c: HostCommand) => [...encodeCmd(c, v)];
    return [
      // Arguments and check words with zero bytes: several COBS blocks per command.
      ...good({ kind: 'step', cycles: 0 }), ...good({ kind: 'step', cycles: 256 }), ...good({ kind: 'step', cycles: 0xffff }),
      ...good({ kind: 'inputs', values: v.widths.map(() => 0n) }),
      // Opcode byte 0 (the first code byte is 01), opcode bytes with high bits set, a 0x0F opcode.
      0, ...cobsEncode(withCrc([0x00])), 0, 0, ...cobsEncode(withCrc([0x81])), 0, 0, ...cobsEncode(withCrc([0x0f])), 0,
      0, ...cobsEncode(withCrc([0x00, 0x03, 0x01, 0x00])), 0,
      // Code bytes announcing blocks longer than any command, with and without the bytes to fill them.
      0, 0x09, 0x02, 0x95, 0x2c, 0, 0, 0x10, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 0,
      0, 0x07, 0x03, 0x01, 0x01, 0x01, 0x01, 0x01, 0, 0, 0xff, ...Array.from({ length: 254 }, () => 0x42), 0,
      // A valid command cut short by a delimiter, then the rest of it.
      ...good({ kind: 'halt' }).slice(0, 3), 0, ...good({ kind: 'run' }),
      // A command inside a longer segment and a good command right after a lone 0x00.
      0, 0x42, ...good({ kind: 'reset' }).slice(1), 0, ...good({ kind: 'host-inputs', on: true }),
    ];
  }

  for (const widths of [[1, 1, 8, 1], [30], []]) {
    const inBits = widths.reduce((a, b) => a + b, 0);
    it(`obeys exactly the commands the TypeScript decoder accepts (${inBits} input bits): good, damaged and garbage segments`, () => {
      const v = inputVector(widths);
      const rng = new SeededRandom(2024 + inBits);
      const pick = (): HostCommand => {
        switch (rng.below(6)) {
          case 0: return { kind: 'run' };
          case 1: return { kind: 'halt' };
          case 2: return { kind: 'step', cycles: rng.below(2) ? rng.below(4) : rng.below(65536) };
          case 3: return { kind: 'reset' };
          case 4: return { kind: 'host-inputs', on: rng.below(2) === 1 };
          default: return { kind: 'inputs', values: widths.map((w) => rng.bits(w)) };
        }
      };
      const stream: number[] = crafted(v);
      for (let k = 0; k < 200; k++) {
        const kind = rng.below(8);
        if (kind < 3) stream.push(...encodeCmd(pick(), v));
        else if (kind === 3) {
          // One to three flipped bits in the raw command, restuffed: the CRC must catch it.
          const raw = rawCommand(pick(), v);
          for (let f = 0; f <= rng.below(3); f++) raw[rng.below(raw.length)] ^= 1 << rng.below(8);
          stream.push(0, ...cobsEncode(raw), 0);
        } else if (kind === 4) {
          // A command cut short or with a byte removed.
          const wire = [...encodeCmd(pick(), v)];
          wire.splice(1 + rng.below(wire.length - 2), 1);
          stream.push(...wire);
        } else if (kind === 5) {
          // Random bytes, sometimes long enough to overrun any command.
          const n = rng.below(3) === 0 ? 20 + rng.below(30) : 1 + rng.below(8);
          for (let i = 0; i < n; i++) stream.push(rng.below(256));
          stream.push(0);
        } else if (kind === 6) {
          // A good command with a wrong opcode value or wrong length, CRC made valid.
          const body = [rng.below(256), ...Array.from({ length: rng.below(6) }, () => rng.below(256))];
          const raw = Uint8Array.from([...body, 0, 0]);
          const crc = commandCrc(raw, 0, body.length);
          raw[body.length] = crc & 0xff;
          raw[body.length + 1] = crc >> 8;
          stream.push(0, ...cobsEncode(raw), 0);
        } else stream.push(0, 0);
      }
      const offsets = v.layout ? v.layout.offsets : [];
      const expected = new CommandDecoder(v).push(Uint8Array.from(stream)).flatMap((e) => {
        if (e.kind !== 'command') return [];
        const c = e.command;
        if (c.kind === 'step') return [`3 ${c.cycles.toString(16)}`];
        if (c.kind === 'inputs') return [`7 ${c.values.reduce((acc, x, i) => acc | (x << BigInt(offsets[i])), 0n).toString(16)}`];
        const op = { run: 1, halt: 2, reset: 4, 'host-inputs': c.kind === 'host-inputs' && c.on ? 5 : 6 }[c.kind];
        return [`${op}`];
      });
      expect(expected.length).toBeGreaterThan(50);
      const monitor = `  always @(posedge clk) if (dut.accept)
    case (dut.opcode)
      3'd3: $display("C 3 %0h", dut.step_arg);
      3'd7: $display("C 7 %0h", dut.host_arg);
      default: $display("C %0d", dut.opcode);
    endcase`;
      const out = ctrlBench(inBits, monitor, `    ${sendBytes(stream)}`);
      expect(out.filter((l) => l.startsWith('C ')).map((l) => l.slice(2))).toEqual(expected);
    });
  }
});

describe('ts_probe_ctrl step counting in Icarus Verilog', () => {
  it('runs exactly N cycles for step N, and counts down bit-serially across byte borrows', () => {
    // The count is kept as a 16-bit register updated one bit per clock; after each pass the testbench prints it.
    // Expected: each step command loads N, and each cycle run after it takes exactly 1 off (arithmetic by hand).
    const v = inputVector([]);
    const cmd = (c: HostCommand) => sendBytes(encodeCmd(c, v));
    const monitor = `  reg was_busy = 1'b0;
  always @(posedge clk) begin
    was_busy <= dut.pass_busy;
    if (was_busy && !dut.pass_busy) $display("P %0d %0d", dut.steps, ce_count);
  end`;
    const frameWait = `#(BIT_NS * 80);`;
    const body = [
      // Runs to completion: 3, then 0 (nothing), then 260 cycles.
      `    ${cmd({ kind: 'step', cycles: 3 })} ${frameWait.repeat(5)}`,
      `    ${cmd({ kind: 'step', cycles: 0 })} ${frameWait.repeat(3)}`,
      `    ${cmd({ kind: 'step', cycles: 260 })} wait (ce_count == 263); ${frameWait.repeat(3)}`,
      // Large counts, halted after a few cycles: the borrow runs through 8, 15 and no bits.
      `    ${cmd({ kind: 'step', cycles: 0x100 })} wait (ce_count == 266); ${cmd({ kind: 'halt' })} ${frameWait.repeat(3)}`,
      `    ${cmd({ kind: 'step', cycles: 0x8000 })} wait (ce_count >= 269); ${cmd({ kind: 'halt' })} ${frameWait.repeat(3)}`,
      `    ${cmd({ kind: 'step', cycles: 0xffff })} wait (ce_count >= 272); ${cmd({ kind: 'halt' })} ${frameWait.repeat(3)}`,
    ].join('\n');
    const out = ctrlBench(0, monitor, body);
    const end = Number(out.find((l) => l.startsWith('END '))!.slice(4));
    const passes = out.filter((l) => l.startsWith('P ')).map((l) => l.slice(2).split(' ').map(Number));
    // Group the printed counts by command: a load starts a group, each later pass is one cycle run.
    const groups: number[][] = [];
    let lastCe = -1;
    for (const [steps, ce] of passes) {
      if (ce === lastCe || groups.length === 0) groups.push([steps]);
      else groups[groups.length - 1].push(steps);
      lastCe = ce;
    }
    expect(groups.map((g) => g[0])).toEqual([3, 0, 260, 0x100, 0x8000, 0xffff]);
    for (const g of groups) expect(g).toEqual(g.map((_, i) => g[0] - i));
    expect(groups.slice(0, 3).map((g) => g.length - 1)).toEqual([3, 0, 260]);
    expect(groups.slice(3).every((g) => g.length >= 4)).toBe(true);
    expect(end).toBe(groups.reduce((a, g) => a + g.length - 1, 0));
  });
});
