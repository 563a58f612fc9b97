// UART transmitter and receiver (8N1, LSB first) as Verilog-2001 source text, sized by a baud divisor parameter.
// The divisor is the number of clock cycles per bit; `baudPlan` in ../baud computes it for a clock and a baud.
import { CLOG2_FUNCTION } from './common';

/**
 * ts_uart_tx: sends one byte per `valid && ready` handshake as start bit, 8 data bits LSB first, stop bit.
 * `ready` is high only when the line is idle, so a byte is never overwritten mid-character.
 */
export function uartTxVerilog(): string {
  return `// ts_uart_tx: 8N1 UART transmitter. DIVISOR clock cycles per bit (at least 2).
// A byte is taken on a rising edge where valid and ready are both high; txd idles high.
module ts_uart_tx #(
  parameter integer DIVISOR = 104
) (
  input  wire       clk,
  input  wire       rst,
  input  wire [7:0] data,
  input  wire       valid,
  output wire       ready,
  output reg        txd
);
${CLOG2_FUNCTION}
  localparam integer CW = clog2(DIVISOR);
  localparam integer LAST_I = DIVISOR - 1;
  localparam [CW-1:0] BIT_LAST = LAST_I[CW-1:0];

  reg [CW-1:0] baud_count;  // clocks left in the current bit
  reg [3:0]    bits_left;   // 10 = start bit ... 1 = stop bit, 0 = idle
  reg [8:0]    shift;       // data bits still to send, then the stop bit

  assign ready = (bits_left == 4'd0);

  always @(posedge clk) begin
    if (rst) begin
      txd        <= 1'b1;
      bits_left  <= 4'd0;
      baud_count <= {CW{1'b0}};
      shift      <= 9'h1FF;
    end else if (bits_left == 4'd0) begin
      if (valid) begin
        txd        <= 1'b0;  // start bit
        shift      <= {1'b1, data};
        bits_left  <= 4'd10;
        baud_count <= BIT_LAST;
      end
    end else if (baud_count != {CW{1'b0}}) begin
      baud_count <= baud_count - 1'b1;
    end else begin
      baud_count <= BIT_LAST;
      bits_left  <= bits_left - 4'd1;
      // Leaving the stop bit sends nothing new: the line simply stays high.
      if (bits_left != 4'd1) begin
        txd   <= shift[0];
        shift <= {1'b1, shift[8:1]};
      end
    end
  end
endmodule
`;
}

/**
 * ts_uart_rx: samples each bit at its middle, counted in clock cycles from the start bit's falling edge.
 * With DIVISOR >= 16 the sampling instant is placed at least as finely as a 16x-oversampling receiver's.
 */
export function uartRxVerilog(): string {
  return `// ts_uart_rx: 8N1 UART receiver. DIVISOR clock cycles per bit (at least 16).
// rxd is synchronised by two flip-flops; each bit is sampled once, at its middle. On the middle of the
// stop bit, valid pulses for one cycle with the byte on data (held until the next byte's first data bit),
// or frame_error pulses if the stop bit is low. A start bit that is gone at its middle is ignored.
module ts_uart_rx #(
  parameter integer DIVISOR = 104
) (
  input  wire       clk,
  input  wire       rst,
  input  wire       rxd,
  output wire [7:0] data,
  output reg        valid,
  output reg        frame_error
);
${CLOG2_FUNCTION}
  localparam integer CW = clog2(DIVISOR);
  localparam integer LAST_I = DIVISOR - 1;
  localparam integer HALF_I = DIVISOR / 2 - 1;
  localparam [CW-1:0] BIT_LAST  = LAST_I[CW-1:0];
  localparam [CW-1:0] HALF_LAST = HALF_I[CW-1:0];

  reg [2:0]    line;        // line[0], line[1]: synchroniser; line[2]: previous settled value
  reg          busy;
  reg [3:0]    bit_index;   // 0 = start bit, 1..8 = data bits, 9 = stop bit
  reg [CW-1:0] count;       // clocks until the next sampling instant
  reg [7:0]    shift;

  wire settled = line[1];
  assign data = shift;

  always @(posedge clk) begin
    valid       <= 1'b0;
    frame_error <= 1'b0;
    if (rst) begin
      line      <= 3'b111;
      busy      <= 1'b0;
      bit_index <= 4'd0;
      count     <= {CW{1'b0}};
      shift     <= 8'h00;
    end else begin
      line <= {line[1:0], rxd};
      if (!busy) begin
        // A falling edge starts a character; waiting half a bit lands on the middle of the start bit.
        if (line[2] && !settled) begin
          busy      <= 1'b1;
          bit_index <= 4'd0;
          count     <= HALF_LAST;
        end
      end else if (count != {CW{1'b0}}) begin
        count <= count - 1'b1;
      end else begin
        count <= BIT_LAST;
        if (bit_index == 4'd0) begin
          if (settled) busy <= 1'b0;  // glitch, not a start bit
          else bit_index <= 4'd1;
        end else if (bit_index != 4'd9) begin
          shift     <= {settled, shift[7:1]};
          bit_index <= bit_index + 4'd1;
        end else begin
          busy <= 1'b0;
          if (settled) valid <= 1'b1;
          else frame_error <= 1'b1;
        end
      end
    end
  end
endmodule
`;
}
