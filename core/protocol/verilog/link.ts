// The probe's serial link in Verilog-2001: frame packer, CRC, COBS stuffer and UART transmitter in a chain,
// plus a UART receiver for bytes from the host. Also bundles every generic block into one source text.
import { MODULE_PREFIX } from './common';
import { crc16Verilog } from './crc16';
import { cobsStufferVerilog } from './cobs';
import { framePackerVerilog } from './packer';
import { uartRxVerilog, uartTxVerilog } from './uart';

/** ts_probe_link: everything between a design's payload bus and the serial pins. */
export function probeLinkVerilog(): string {
  return `// ts_probe_link: payload bus in, framed serial stream out (8N1, DIVISOR clocks per bit), and a receiver
// for host bytes. The design advances in lockstep: it may change payload/cycle after an edge with start && ready.
module ts_probe_link #(
  parameter integer PAYLOAD_BITS  = 32,
  parameter [31:0]  FINGERPRINT   = 32'h00000000,
  parameter integer DIVISOR       = 104,
  parameter integer ID_EVERY_LOG2 = 7
) (
  input  wire                    clk,
  input  wire                    rst,
  input  wire                    start,
  input  wire [PAYLOAD_BITS-1:0] payload,
  input  wire [6:0]              cycle,
  output wire                    ready,
  output wire                    txd,
  input  wire                    rxd,
  output wire [7:0]              rx_data,
  output wire                    rx_valid,
  output wire                    rx_error
);
  wire [7:0] raw_data;
  wire       raw_valid, raw_last, raw_ready;
  wire [7:0] wire_data;
  wire       wire_valid, wire_ready;

  ts_frame_packer #(
    .PAYLOAD_BITS  (PAYLOAD_BITS),
    .FINGERPRINT   (FINGERPRINT),
    .ID_EVERY_LOG2 (ID_EVERY_LOG2)
  ) packer (
    .clk (clk), .rst (rst),
    .start (start), .payload (payload), .cycle (cycle), .ready (ready),
    .out_data (raw_data), .out_valid (raw_valid), .out_last (raw_last), .out_ready (raw_ready)
  );

  ts_cobs_stuffer stuffer (
    .clk (clk), .rst (rst),
    .in_data (raw_data), .in_valid (raw_valid), .in_last (raw_last), .in_ready (raw_ready),
    .out_data (wire_data), .out_valid (wire_valid), .out_ready (wire_ready)
  );

  ts_uart_tx #(.DIVISOR (DIVISOR)) transmitter (
    .clk (clk), .rst (rst),
    .data (wire_data), .valid (wire_valid), .ready (wire_ready), .txd (txd)
  );

  ts_uart_rx #(.DIVISOR (DIVISOR)) receiver (
    .clk (clk), .rst (rst),
    .rxd (rxd), .data (rx_data), .valid (rx_valid), .frame_error (rx_error)
  );
endmodule
`;
}

/** One generic block: its module name and its source text. */
export type VerilogBlock = { module: string; source: string };

/** Every generic block, dependencies first, so the concatenation compiles in one pass. */
export function protocolVerilogBlocks(): VerilogBlock[] {
  return [
    { module: `${MODULE_PREFIX}uart_tx`, source: uartTxVerilog() },
    { module: `${MODULE_PREFIX}uart_rx`, source: uartRxVerilog() },
    { module: `${MODULE_PREFIX}crc16`, source: crc16Verilog() },
    { module: `${MODULE_PREFIX}cobs_stuffer`, source: cobsStufferVerilog() },
    { module: `${MODULE_PREFIX}frame_packer`, source: framePackerVerilog() },
    { module: `${MODULE_PREFIX}probe_link`, source: probeLinkVerilog() },
  ];
}

/** All generic blocks as one Verilog-2001 source text. */
export function protocolVerilogLibrary(): string {
  return protocolVerilogBlocks().map((b) => b.source).join('\n');
}
