// The probe's serial link in Verilog-2001: frame packer (with its CRC and COBS stuffing) and UART transmitter in
// a chain, plus a UART receiver for bytes from the host. Also bundles every generic block into one source text.
import { MODULE_PREFIX } from './common';
import { crc16Verilog } from './crc16';
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
  wire tx_valid, tx_bit, tx_last, tx_advance;
  // A bit-serial consumer of host bytes would use these; the link only passes bytes on.
  /* verilator lint_off UNUSEDSIGNAL */
  wire rx_bit_strobe, rx_bit_data;
  /* verilator lint_on UNUSEDSIGNAL */

  ts_frame_packer #(
    .PAYLOAD_BITS  (PAYLOAD_BITS),
    .FINGERPRINT   (FINGERPRINT),
    .ID_EVERY_LOG2 (ID_EVERY_LOG2)
  ) packer (
    .clk (clk), .rst (rst),
    .start (start), .payload (payload), .cycle (cycle), .ready (ready),
    .tx_valid (tx_valid), .tx_bit (tx_bit), .tx_last (tx_last), .tx_advance (tx_advance)
  );

  ts_uart_tx #(.DIVISOR (DIVISOR)) transmitter (
    .clk (clk), .rst (rst),
    .valid (tx_valid), .data_bit (tx_bit), .last (tx_last), .advance (tx_advance), .txd (txd)
  );

  ts_uart_rx #(.DIVISOR (DIVISOR)) receiver (
    .clk (clk), .rst (rst),
    .rxd (rxd), .data (rx_data), .valid (rx_valid), .frame_error (rx_error),
    .bit_strobe (rx_bit_strobe), .bit_data (rx_bit_data)
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
    { module: `${MODULE_PREFIX}frame_packer`, source: framePackerVerilog() },
    { module: `${MODULE_PREFIX}probe_link`, source: probeLinkVerilog() },
  ];
}

/** All generic blocks as one Verilog-2001 source text. */
export function protocolVerilogLibrary(): string {
  return protocolVerilogBlocks().map((b) => b.source).join('\n');
}
