// Verilog for the design-specific probe: the generic probe controller (command receiver, lockstep clock enable,
// cycle counter, host-driven inputs) and a board top `<m>_board` wiring it to the design's controller and datapath.
// Numbers that need the protocol stage (divisor, fingerprint, field order) are worked out by core/probe/board.ts.
import type { Machine } from '../ir/schema';
import type { Synthesis } from '../synth/schema';
import { TOOL_VERSION } from '../util/version';
import { literal } from './expr';
import { CLOG2_FUNCTION } from './verilog-text';
import type { HdlFile, HdlNames } from './modules';

/** One payload field as the board must drive it (the probe layout's field list, in order). */
export interface BoardField {
  kind: 'input' | 'state' | 'register' | 'status' | 'output';
  source: string;
  width: number;
}

export interface BoardParams {
  /** Probe field list in payload order (field 0 in the least significant bits). */
  fields: readonly BoardField[];
  payloadBits: number;
  fingerprint: number;
  /** Clock cycles per UART bit. */
  divisor: number;
  clockHz: number;
  baud: number;
  startHalted: boolean;
  /** Text of the design's `<m>_dp` module, from which the observed variant is made. */
  datapathText: string;
}

/** Opcodes as the Verilog receiver decodes them; core/protocol/commands.ts has the same table (tests hold them equal). */
export const PROBE_OPCODES = { run: 0x01, halt: 0x02, step: 0x03, reset: 0x04, hostInputsOn: 0x05, hostInputsOff: 0x06, inputs: 0x07 } as const;

/** Serial pins of the board top; the `ts_` prefix is reserved, so they never clash with a design's names. */
export const PROBE_TX = 'ts_probe_tx';
export const PROBE_RX = 'ts_probe_rx';

const SYNC_STAGES = 2;

const hex8 = (v: number) => (v >>> 0).toString(16).padStart(8, '0');
const range = (w: number) => (w === 1 ? '' : `[${w - 1}:0] `);

/**
 * ts_probe_ctrl: everything of the probe that does not depend on the design. It instantiates the link blocks
 * itself rather than ts_probe_link, because a reset command must reset the frame packer (so the next frame is
 * announced by an identification frame flagged "after reset") without resetting the transmitter, which may
 * still be sending the last delimiter.
 */
export function probeCtrlVerilog(): string {
  const op = PROBE_OPCODES;
  return `// ts_probe_ctrl: host command receiver, lockstep clock enable, cycle counter and host-driven inputs, with
// the probe's serial link (frame packer with CRC and COBS stuffing, UART transmitter and receiver).
//
// Lockstep: ce is high for one clock exactly on the edges where the packer takes a frame (start && ready), so
// the frame holds the values of the cycle that this edge ends (payload is sampled on the same edge the design
// advances on) and no cycle goes unreported, at any baud.
//
// Commands (docs/probe-protocol.md, "Host commands"): each arrives as COBS(opcode, ARG_BYTES argument bytes,
// CRC-16/MCRF4XX low, high) followed by 0x00, every command of the same length. A segment is obeyed only if it
// is valid COBS, has that length and a valid opcode, leaves a CRC residue of 0 and had no UART framing error;
// otherwise it is ignored. IN_BITS is the design's input vector width (0 allowed); the vector follows the opcode
// LSB first, packed like the frame payload; the step count follows it as 16 bits, low byte first.
module ts_probe_ctrl #(
  parameter integer IN_BITS       = 8,
  parameter integer PAYLOAD_BITS  = 32,
  parameter [31:0]  FINGERPRINT   = 32'h00000000,
  parameter integer DIVISOR       = 104,
  parameter integer ID_EVERY_LOG2 = 7,
  parameter integer START_HALTED  = 0
) (
  input  wire                                   clk,
  input  wire                                   rst,         // synchronized board reset, active high
  input  wire [(IN_BITS > 0 ? IN_BITS : 1)-1:0] pins,        // the design's inputs from the pins (synchronized)
  output wire [(IN_BITS > 0 ? IN_BITS : 1)-1:0] inputs,      // what the design sees: pins or the host's vector
  input  wire [PAYLOAD_BITS-1:0]                payload,     // this cycle's frame payload
  output wire                                   ce,          // the design's clock enable
  output wire                                   design_rst,  // the design's reset: board reset or reset command
  output wire                                   txd,
  input  wire                                   rxd
);
${CLOG2_FUNCTION}
  localparam integer IN_W      = IN_BITS > 0 ? IN_BITS : 1;
  localparam integer IN_BYTES  = (IN_BITS + 7) / 8;
  localparam integer ARG_BYTES = IN_BYTES > 2 ? IN_BYTES : 2;  // room for the input vector and a step count
  localparam integer ARG_BITS  = 8 * ARG_BYTES;
  localparam integer LEN_I     = ARG_BYTES + 3;                // every command, raw bytes
  localparam integer CW        = clog2(LEN_I + 2);             // counts 0 .. LEN_I + 1: all ones is too long
  localparam [CW-1:0] LEN       = LEN_I[CW-1:0];
  localparam [CW-1:0] LAST_ARG  = ARG_BYTES[CW-1:0];
  localparam [CW-1:0] ONE       = 1;
  localparam [CW-1:0] DAMAGED   = {CW{1'b1}};
  localparam [7:0]    LONG_CODE = 8'hFF << CW;                 // bits of a code byte that run_left cannot hold
  localparam [2:0]   OP_RUN = 3'd${op.run}, OP_HALT = 3'd${op.halt}, OP_STEP = 3'd${op.step}, OP_RESET = 3'd${op.reset};
  localparam [2:0]   OP_HOST_ON = 3'd${op.hostInputsOn}, OP_HOST_OFF = 3'd${op.hostInputsOff}, OP_INPUTS = 3'd${op.inputs};

  // ---- serial link ------------------------------------------------------------------------------------
  wire       ready;
  wire [7:0] rx_data;
  wire       tx_valid, tx_bit, tx_last, tx_advance, rx_valid, rx_error, rx_bit_strobe, rx_bit_data;
  reg        reset_now;   // one clock: a reset command is being applied
  reg  [6:0] counter;     // design cycle number modulo 128, restarted by every reset

  // The step count and the cycle counter change at most once per frame, and a frame keeps the packer busy for
  // far longer than 16 clocks, so both are updated one bit per clock in a pass of 16 clocks: after a ce the
  // count goes down by one and the counter up by one, each through a one-bit subtractor or adder while its
  // register rotates; after a step command the count is shifted in from the argument register. This spares a
  // 16-bit and a 7-bit adder, the count's load multiplexer and a 16-bit comparison.
  reg  [15:0] steps;        // cycles still to run while stepping (valid while no pass runs)
  reg         steps_left;   // steps != 0, found during the last pass
  reg         pass_busy;    // a pass is rotating the registers; pass_at is the bit position
  reg  [3:0]  pass_at;
  reg         pass_load;    // this pass loads the step count instead of counting it down
  reg         pass_count;   // this pass also adds one to the cycle counter (it follows a ce)
  reg         load_due;     // a step command waits for the pass in progress to end
  reg         borrow, carry;

  ts_frame_packer #(.PAYLOAD_BITS (PAYLOAD_BITS), .FINGERPRINT (FINGERPRINT), .ID_EVERY_LOG2 (ID_EVERY_LOG2)) packer (
    .clk (clk), .rst (rst || reset_now),
    .start (ce), .payload (payload), .cycle (counter), .ready (ready),
    .tx_valid (tx_valid), .tx_bit (tx_bit), .tx_last (tx_last), .tx_advance (tx_advance)
  );
  ts_uart_tx #(.DIVISOR (DIVISOR)) transmitter (
    .clk (clk), .rst (rst), .valid (tx_valid), .data_bit (tx_bit), .last (tx_last), .advance (tx_advance), .txd (txd)
  );
  ts_uart_rx #(.DIVISOR (DIVISOR)) receiver (
    .clk (clk), .rst (rst), .rxd (rxd), .data (rx_data), .valid (rx_valid), .frame_error (rx_error),
    .bit_strobe (rx_bit_strobe), .bit_data (rx_bit_data)
  );

  // ---- command receiver: COBS decoding one byte at a time, CRC and arguments one bit at a time -----------
  // Counters are only as wide as the longest command needs: a COBS block or a command longer than that
  // cannot be valid. count doubles as the damage flag: its all-ones value (DAMAGED, above any command's length)
  // marks a segment that can no longer be accepted.
  reg  [CW-1:0]       run_left;   // 1 + stuffed bytes left in the current COBS block; 1: a code byte is next
  reg                 zero_due;   // the current block ends in an implied 0x00 (emitted when the next block starts)
  reg  [CW-1:0]       count;      // decoded bytes of this command so far, or DAMAGED
  // The opcode and argument bits in arrival order, the latest at the top: once the arguments are in, the
  // opcode is the low byte and the arguments sit above it. The opcode's bits 7..3 (checked zero on arrival)
  // and argument bits no command uses are never read.
  /* verilator lint_off UNUSEDSIGNAL */
  reg  [ARG_BITS+7:0] args;
  /* verilator lint_on UNUSEDSIGNAL */
  wire [2:0]          opcode = args[2:0];
  wire [15:0]         crc;

  wire       delimiter = rx_valid && rx_data == 8'h00;
  wire       data_due  = run_left != ONE;  // the byte on its way is a data byte, not a code byte
  wire       code_byte = rx_valid && rx_data != 8'h00 && !data_due;
  wire       data_byte = rx_valid && rx_data != 8'h00 && data_due;
  wire       decoded   = data_byte || (code_byte && zero_due);
  // A code byte too big for run_left announces a block longer than any command; an opcode byte must be a data
  // byte (a zero is no opcode) with no bit above the third (opcodes fit 3 bits).
  wire       damage    = rx_error || (code_byte && (rx_data & LONG_CODE) != 8'h00) ||
                         (decoded && count == {CW{1'b0}} && (!data_byte || rx_data[7:3] != 5'd0));

  // The decoded bits, as the receiver samples them (least significant first), feed the CRC and the argument
  // register. Whether a byte is data or a code byte is known before its first bit: a data byte's bits go in as
  // they are; a code byte stands for the zero that ended the previous block, so it feeds 8 zero bits, except the
  // first code byte of a segment, which stands for nothing. The delimiter then feeds 8 zero bits as well (it
  // arrives where a code byte would), but they leave a CRC register at 0 unchanged and a non-zero one non-zero,
  // so the residue test at the delimiter is unaffected. A 0x00 arriving mid-block makes the segment invalid anyway.
  wire feed     = rx_bit_strobe && (data_due || zero_due);
  wire feed_bit = rx_bit_data && data_due;
  // CRC-16/MCRF4XX: the reflected form of the frames' CRC, so that it can take the bits in line order.
  ts_crc16 #(.REFLECTED (1)) command_check (.clk (clk), .init (rst || delimiter), .enable (feed), .data (feed_bit), .crc (crc));

  // Decoded bytes 0 .. ARG_BYTES (opcode and arguments) are kept, the CRC bytes are not. A pass that loads the
  // step count shifts the register too, to take the count out bit by bit.
  always @(posedge clk) begin
    if ((feed && count <= LAST_ARG) || (pass_busy && pass_load)) args <= {feed_bit, args[ARG_BITS+7:1]};
  end

  // A damaged segment has count at DAMAGED, never LEN; an opcode of 0 has damaged it.
  wire accept = delimiter && !data_due && count == LEN && crc == 16'h0000;

  always @(posedge clk) begin
    if (rst || delimiter) begin
      run_left <= ONE;
      zero_due <= 1'b0;
      count    <= {CW{1'b0}};
    end else begin
      if (code_byte) begin
        run_left <= rx_data[CW-1:0];
        // Only a full 254-byte block (code 0xFF) has no implied zero; shorter commands never use one.
        zero_due <= LEN_I < 254 || rx_data != 8'hFF;
      end else if (data_byte) begin
        run_left <= run_left - 1'b1;
      end
      // count stops at DAMAGED, so a long segment can never wrap round to a valid length.
      if (damage) count <= DAMAGED;
      else if (decoded && count != DAMAGED) count <= count + 1'b1;
    end
  end

  // Argument byte 0 is just above the opcode (arguments are sent LSB first). The step count is loaded one bit
  // at a time from its lowest bit while the register shifts, so only bit 0 is read; the whole word is named for
  // testbenches.
  /* verilator lint_off UNUSEDSIGNAL */
  wire [15:0] step_arg = args[8 +: 16];
  /* verilator lint_on UNUSEDSIGNAL */
  wire [IN_W-1:0] host_arg;
  generate
    if (IN_BITS > 0) begin : vector
      assign host_arg = args[8 +: IN_W];
    end else begin : no_vector
      assign host_arg = 1'b0;
    end
  endgenerate

  // ---- lockstep control ---------------------------------------------------------------------------------
  reg             running;      // free-running lockstep
  reg             stepping;     // a step command is being carried out
  reg             host_mode;    // the design sees host_in instead of the pins
  reg  [IN_W-1:0] host_in;
  reg             reset_due;    // a reset command waits for the packer to be idle

  wire step_cmd  = accept && opcode == OP_STEP;
  wire step_bit  = pass_load ? step_arg[0] : steps[0] ^ borrow;
  wire pass_go   = !pass_busy && (ce || load_due || step_cmd);

  // A frame is started only when the packer can take it, so ce is exactly the packer's taking edge; never
  // during a reset, so that ce counts design cycles and nothing else, nor while a pass has the counts.
  wire go = (running || (stepping && steps_left)) && !pass_busy && !load_due && !reset_due && !reset_now && !rst;
  assign ce         = go && ready;
  assign inputs     = host_mode ? host_in : pins;
  // Both terms are register outputs, so the design's asynchronous reset sees no glitch from this gate.
  assign design_rst = rst || reset_now;

  always @(posedge clk) begin
    if (pass_busy) begin
      steps      <= {step_bit, steps[15:1]};
      borrow     <= borrow && !steps[0];
      steps_left <= steps_left || step_bit;
      pass_at    <= pass_at + 4'd1;
    end else begin
      borrow     <= 1'b1;
      steps_left <= steps_left && !pass_go;
      pass_at    <= 4'd0;
    end
  end

  always @(posedge clk) begin
    if (rst) begin
      pass_busy <= 1'b0;
      load_due  <= 1'b0;
    end else if (pass_go) begin
      pass_busy  <= 1'b1;
      pass_load  <= load_due || step_cmd;
      pass_count <= ce;
      load_due   <= 1'b0;
    end else begin
      if (pass_at == 4'd15) pass_busy <= 1'b0;
      if (step_cmd) load_due <= 1'b1;
    end
  end

  always @(posedge clk) begin
    if (rst) begin
      running   <= START_HALTED == 0;
      stepping  <= 1'b0;
      host_mode <= 1'b0;
      host_in   <= {IN_W{1'b0}};
      reset_due <= 1'b0;
      reset_now <= 1'b0;
      counter   <= 7'd0;
      carry     <= 1'b1;
    end else begin
      reset_now <= 1'b0;
      if (pass_busy && pass_count && pass_at < 4'd7) begin
        counter <= {counter[0] ^ carry, counter[6:1]};
        carry   <= carry && counter[0];
      end else if (!pass_busy) begin
        carry <= 1'b1;
      end
      // Between frames (the packer idle, so no pass is counting), the design and the packer are reset for one
      // clock; the counter restarts at 0.
      if (reset_due && ready) begin
        reset_due <= 1'b0;
        reset_now <= 1'b1;
        counter   <= 7'd0;
      end
      if (accept) begin
        case (opcode)
          OP_RUN:      begin running <= 1'b1; stepping <= 1'b0; end
          OP_HALT:     begin running <= 1'b0; stepping <= 1'b0; end
          OP_STEP:     begin running <= 1'b0; stepping <= 1'b1; end
          OP_RESET:    reset_due <= 1'b1;
          OP_HOST_ON:  host_mode <= 1'b1;
          OP_HOST_OFF: host_mode <= 1'b0;
          OP_INPUTS:   host_in <= host_arg;
          default:     ;
        endcase
      end
    end
  end
endmodule
`;
}

/** Ports of a generated module: name, direction and width, read from its ANSI port list. */
export function modulePorts(text: string, module: string): { name: string; dir: 'input' | 'output'; width: number }[] {
  const start = text.indexOf(`module ${module} (`);
  if (start < 0) throw new Error(`probe: module ${module} not found in the generated datapath`);
  const end = text.indexOf('\n);', start);
  const ports: { name: string; dir: 'input' | 'output'; width: number }[] = [];
  for (const line of text.slice(start, end).split('\n')) {
    const p = /^\s*(input|output)\s+(?:wire|reg)\s+(?:\[(\d+):0\]\s*)?(\w+),?/.exec(line);
    if (p) ports.push({ dir: p[1] as 'input' | 'output', width: p[2] ? Number(p[2]) + 1 : 1, name: p[3] });
  }
  return ports;
}

/** Name of the datapath variant that also drives every register's value out, for the probe to report. */
export function observedDatapathName(names: HdlNames): string {
  return `${names.datapath}_probed`;
}

export const observePort = (reg: string) => `ts_obs_${reg}`;

/**
 * The datapath with one more output per register: the same module text under another name, so the plain
 * `<m>_dp` stays as it is for boards without the probe. Registers are internal to `<m>_dp`, and a synthesizable
 * design cannot read them through hierarchical names.
 */
export function observedDatapath(m: Machine, names: HdlNames, dpText: string): HdlFile {
  const name = observedDatapathName(names);
  const head = `module ${names.datapath} (`;
  const at = dpText.indexOf(head);
  const close = dpText.indexOf('\n);', at);
  const endAt = dpText.lastIndexOf('endmodule');
  if (at < 0 || close < 0 || endAt < close) throw new Error(`probe: the datapath text of ${m.name} does not have the expected module layout`);
  const ports = m.registers.map((r) => `  output wire ${range(r.type.width)}${observePort(r.name)}`).join(',\n');
  const assigns = m.registers.map((r) => `  assign ${observePort(r.name)} = ${r.name};`).join('\n');
  const text = [
    dpText.slice(0, at).replace(`// ${names.datapath}.v: datapath`, `// ${name}.v: datapath for the probe, every register also driven out`),
    `module ${name} (`,
    dpText.slice(at + head.length, close) + (m.registers.length ? `,\n${ports}` : ''),
    dpText.slice(close, endAt),
    m.registers.length ? `  // Register values for the probe\n${assigns}\n\n` : '',
    dpText.slice(endAt),
  ].join('');
  return { name: `${name}.v`, text };
}

/** The board top: pins, reset and input synchronizers, controller, observed datapath and ts_probe_ctrl. */
export function boardTopVerilog(m: Machine, syn: Synthesis, names: HdlNames, p: BoardParams): HdlFile {
  const top = `${m.name}_board`;
  const clk = names.clock;
  const dpName = observedDatapathName(names);
  const dpPorts = modulePorts(p.datapathText, names.datapath);
  const inBits = m.inputs.reduce((a, i) => a + i.type.width, 0);
  const inW = Math.max(1, inBits);
  const L: string[] = [];
  L.push(`// ${top}.v: board top with the Twinstep probe (controller, datapath, lockstep clock enable, serial link)`);
  L.push(`// Generated by Twinstep ${TOOL_VERSION} from machine '${m.name}' (${m.file}). Do not edit: change the design and regenerate.`);
  L.push(`// Clock ${p.clockHz} Hz, probe UART ${p.baud} baud (divisor ${p.divisor}), 8N1 on ${PROBE_TX} (out) and ${PROBE_RX} (in).`);
  L.push(`// Frame payload ${p.payloadBits} bits, design fingerprint 0x${hex8(p.fingerprint)}; ${p.startHalted ? 'starts halted, waiting for the host' : 'starts running in lockstep'}.`);
  L.push('// The design advances only when its frame has been handed to the transmitter: see docs/probe-protocol.md.');
  L.push('/* verilator lint_off SYMRSVDWORD */ // design names that are C++ words matter only inside Verilator\'s C++ model');
  L.push('`timescale 1ns/1ps', '');
  L.push(`module ${top} (`);
  const ports = [
    `  input  wire ${clk},`,
    `  input  wire ${names.reset},${' '.repeat(8)}// board reset, active ${names.resetActiveLow ? 'low' : 'high'}`,
    ...m.inputs.map((i) => `  input  wire ${range(i.type.width)}${i.name},`),
    ...m.outputs.map((o) => `  output wire ${range(o.type.width)}${o.name},`),
    `  output wire ${PROBE_TX},${' '.repeat(6)}// probe UART, board to host`,
    `  input  wire ${PROBE_RX}${' '.repeat(7)}// probe UART, host to board`,
  ];
  L.push(...ports, ');', '');
  L.push(`  // Reset synchronizer: asserts at once, releases on the ${SYNC_STAGES}nd clock edge after the pin does.`);
  L.push(`  wire ts_rst_pin = ${names.resetActiveLow ? `~${names.reset}` : names.reset};`);
  L.push(`  reg  [${SYNC_STAGES - 1}:0] ts_rst_sync;`);
  L.push(`  always @(posedge ${clk} or posedge ts_rst_pin)`);
  L.push(`    if (ts_rst_pin) ts_rst_sync <= ${SYNC_STAGES}'b${'1'.repeat(SYNC_STAGES)};`);
  L.push(`    else ts_rst_sync <= {ts_rst_sync[${SYNC_STAGES - 2}:0], 1'b0};`);
  L.push(`  wire ts_rst = ts_rst_sync[${SYNC_STAGES - 1}];`);
  L.push('');
  L.push(`  // Pins as the design would see them: two-flip-flop synchronizers on asynchronous 1-bit inputs. They run`);
  L.push('  // on every clock, so a pin must hold for two clocks before the edge that ends a cycle to count in it.');
  const pinExpr = new Map<string, string>();
  for (const i of m.inputs) {
    if (i.synchronize && i.type.width === 1) {
      const s = `ts_sync_${i.name}`;
      L.push(`  reg  [${SYNC_STAGES - 1}:0] ${s};`);
      L.push(`  always @(posedge ${clk}) ${s} <= {${s}[${SYNC_STAGES - 2}:0], ${i.name}};`);
      pinExpr.set(i.name, `${s}[${SYNC_STAGES - 1}]`);
    } else pinExpr.set(i.name, i.name);
  }
  const inOffset = new Map<string, number>();
  let off = 0;
  for (const i of m.inputs) {
    inOffset.set(i.name, off);
    off += i.type.width;
  }
  L.push(`  wire [${inW - 1}:0] ts_pins = ${inBits ? `{${[...m.inputs].reverse().map((i) => pinExpr.get(i.name)).join(', ')}}` : "1'b0"};`);
  L.push(`  wire [${inW - 1}:0] ts_in;       // the inputs the design sees this cycle (pins or host-driven)`);
  if (!inBits) L.push('  /* verilator lint_off UNUSEDSIGNAL */ // a design without inputs leaves the placeholder bit unread', '  wire ts_in_unused = ts_in[0];', '  /* verilator lint_on UNUSEDSIGNAL */');
  const inSel = (name: string) => {
    const w = m.inputs.find((i) => i.name === name)!.type.width;
    const o = inOffset.get(name)!;
    return w === 1 && inW === 1 ? 'ts_in' : w === 1 ? `ts_in[${o}]` : `ts_in[${o + w - 1}:${o}]`;
  };
  L.push('  wire ts_ce;');
  L.push('  // The design resets asynchronously on this net while the probe blocks reset synchronously on ts_rst, which');
  L.push('  // drives it. Both are released by a clock edge (synchronizer and reset command are registers), so either');
  L.push('  // use is safe and the lint rule about mixing them is waived here.');
  L.push('  /* verilator lint_off SYNCASYNCNET */');
  L.push('  wire ts_design_rst;');
  L.push('  /* verilator lint_on SYNCASYNCNET */');
  L.push(`  wire ${range(syn.encoding.width)}ts_state;`);
  for (const s of syn.datapath.statusSignals) L.push(`  wire ${s.name};`);
  for (const o of syn.controller.outputs.filter((x) => x.role !== 'output')) L.push(`  wire ${o.name};`);
  for (const r of m.registers) L.push(`  wire ${range(r.type.width)}ts_reg_${r.name};`);
  L.push('');
  const ctrlConns = [
    `.clk(${clk})`,
    '.rst(ts_design_rst)',
    '.ce(ts_ce)',
    ...syn.controller.inputs.map((i) => `.${i.name}(${i.from === 'input' ? inSel(i.name) : i.name})`),
    ...syn.controller.outputs.map((o) => `.${o.name}(${o.name})`),
    '.state(ts_state)',
  ];
  L.push(`  ${names.controller} u_ctrl (`, ctrlConns.map((c) => `    ${c}`).join(',\n'), '  );', '');
  const dpConns = dpPorts.map((port) => {
    if (port.name === 'clk') return `.clk(${clk})`;
    if (port.name === 'rst') return '.rst(ts_design_rst)';
    if (port.name === 'ce') return '.ce(ts_ce)';
    if (port.dir === 'input' && inOffset.has(port.name)) return `.${port.name}(${inSel(port.name)})`;
    return `.${port.name}(${port.name})`;
  });
  for (const r of m.registers) dpConns.push(`.${observePort(r.name)}(ts_reg_${r.name})`);
  L.push(`  ${dpName} u_dp (`, dpConns.map((c) => `    ${c}`).join(',\n'), '  );');
  const driven = new Set([...syn.controller.outputs.filter((o) => o.role === 'output').map((o) => o.drives), ...syn.datapath.outputs.map((o) => o.output)]);
  for (const o of m.outputs.filter((x) => !driven.has(x.name))) L.push(`  assign ${o.name} = ${literal(o.defaultBits, o.type.width)}; // never driven by a state: its default`);
  const dpUsed = new Set(dpPorts.map((x) => x.name));
  const unusedCtrl = syn.controller.outputs.filter((o) => o.role !== 'output' && !dpUsed.has(o.name));
  if (unusedCtrl.length) {
    L.push('  /* verilator lint_off UNUSEDSIGNAL */');
    for (const o of unusedCtrl) L.push(`  wire ts_unused_${o.name} = ${o.name}; // control signal with nothing to drive in this datapath`);
    L.push('  /* verilator lint_on UNUSEDSIGNAL */');
  }
  L.push('');
  const fieldExpr = (f: BoardField): string => {
    switch (f.kind) {
      case 'input':
        return inSel(f.source);
      case 'state':
        return 'ts_state';
      case 'register':
        return `ts_reg_${f.source}`;
      default:
        return f.source;
    }
  };
  L.push('  // Frame payload {field n-1, ..., field 0}: inputs, state code, registers, status signals, 1-bit outputs.');
  L.push(`  wire [${p.payloadBits - 1}:0] ts_payload = {`);
  L.push([...p.fields].reverse().map((f) => `    ${fieldExpr(f)}`).join(',\n'));
  L.push('  };', '');
  L.push('  ts_probe_ctrl #(');
  L.push(`    .IN_BITS      (${inBits}),`);
  L.push(`    .PAYLOAD_BITS (${p.payloadBits}),`);
  L.push(`    .FINGERPRINT  (32'h${hex8(p.fingerprint)}),`);
  L.push(`    .DIVISOR      (${p.divisor}),`);
  L.push(`    .START_HALTED (${p.startHalted ? 1 : 0})`);
  L.push('  ) u_probe (');
  L.push(`    .clk (${clk}), .rst (ts_rst), .pins (ts_pins), .inputs (ts_in), .payload (ts_payload),`);
  L.push(`    .ce (ts_ce), .design_rst (ts_design_rst), .txd (${PROBE_TX}), .rxd (${PROBE_RX})`);
  L.push('  );', '', 'endmodule');
  return { name: `${top}.v`, text: L.join('\n') + '\n' };
}
