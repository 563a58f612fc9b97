// UART transmitter and receiver (8N1, LSB first) as Verilog-2001 source text, sized by a baud divisor parameter.
// The divisor is the number of clock cycles per bit; `baudPlan` in ../baud computes it for a clock and a baud.
import { CLOG2_FUNCTION } from './common';

/**
 * ts_uart_tx: sends one byte per `valid` as start bit, 8 data bits LSB first, stop bit. It keeps no copy of the
 * byte and does not count its bits: the source holds the byte, offers the bit being sent on `data_bit` and says
 * which one is the last, which spares a 9-bit load multiplexer and a bit counter.
 */
export function uartTxVerilog(): string {
  return `// ts_uart_tx: 8N1 UART transmitter that reads its byte one bit at a time. DIVISOR clock cycles per bit (at
// least 2); txd idles high. While valid is high the source offers a byte: the transmitter sends a start bit, then
// data bits, least significant first, each taken from data_bit, then a stop bit. advance pulses for one clock at
// the end of every data bit; the source then moves to the byte's next bit and holds it on data_bit until the next
// pulse. The source raises last during the byte's eighth bit; after that bit's pulse the stop bit follows, and
// the source may drop valid or offer its next byte at once (it starts after the stop bit). txd follows the bit
// timing one clock late, from a flip-flop.
module ts_uart_tx #(
  parameter integer DIVISOR = 104
) (
  input  wire clk,
  input  wire rst,
  input  wire valid,
  input  wire data_bit,
  input  wire last,
  output wire advance,
  output reg  txd
);
${CLOG2_FUNCTION}
  localparam integer CW = clog2(DIVISOR);
  localparam integer LAST_I = DIVISOR - 1;
  localparam [CW-1:0] BIT_LAST = LAST_I[CW-1:0];
  localparam [1:0] IDLE = 2'd0, START = 2'd1, DATA = 2'd2, STOP = 2'd3;

  reg [1:0]    phase;
  reg [CW-1:0] baud_count;  // clocks left in the current bit; held at BIT_LAST while idle
  wire         bit_end = baud_count == {CW{1'b0}};

  assign advance = (phase == DATA) && bit_end;

  always @(posedge clk) begin
    if (rst || phase == IDLE || bit_end) baud_count <= BIT_LAST;
    else baud_count <= baud_count - 1'b1;
  end

  always @(posedge clk) begin
    if (rst) phase <= IDLE;
    else case (phase)
      IDLE:    if (valid) phase <= START;
      START:   if (bit_end) phase <= DATA;
      DATA:    if (bit_end && last) phase <= STOP;
      default: if (bit_end) phase <= IDLE;
    endcase
  end

  always @(posedge clk) begin
    if (rst) txd <= 1'b1;
    else txd <= (phase == START) ? 1'b0 : (phase == DATA) ? data_bit : 1'b1;
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
// stop bit, valid pulses for one cycle with the byte on data (held until the next byte's start bit has been
// confirmed), or frame_error pulses if the stop bit is low. A start bit that is gone at its middle is ignored.
// For a bit-serial consumer, bit_strobe is high for one clock at each data bit's sampling instant, with the
// bit on bit_data (least significant bit first, as on the line).
module ts_uart_rx #(
  parameter integer DIVISOR = 104
) (
  input  wire       clk,
  input  wire       rst,
  input  wire       rxd,
  output wire [7:0] data,
  output reg        valid,
  output reg        frame_error,
  output wire       bit_strobe,
  output wire       bit_data
);
${CLOG2_FUNCTION}
  localparam integer CW = clog2(DIVISOR);
  localparam integer LAST_I = DIVISOR - 1;
  localparam integer SAMPLE_I = DIVISOR - DIVISOR / 2;
  localparam [CW-1:0] BIT_LAST  = LAST_I[CW-1:0];
  // The count runs BIT_LAST .. 0 once per bit from the start edge; at SAMPLE_AT, DIVISOR / 2 clocks into the
  // bit, it is the bit's middle.
  localparam [CW-1:0] SAMPLE_AT = SAMPLE_I[CW-1:0];

  reg [2:0]    line;        // line[0], line[1]: synchroniser; line[2]: previous settled value
  reg          busy;        // a character is being received
  reg          started;     // its start bit was still low at its middle
  reg [CW-1:0] count;       // held at BIT_LAST while idle
  // Data bits enter at the top; the 1 loaded below them marks how far the byte has come: when it reaches
  // bit 0, all 8 data bits are in and the next sample is the stop bit.
  reg [8:0]    shift;

  wire settled = line[1];
  wire sample  = busy && count == SAMPLE_AT;
  wire in_data = started && !shift[0];
  assign data       = shift[8:1];
  assign bit_strobe = sample && in_data;
  assign bit_data   = settled;

  always @(posedge clk) begin
    if (rst || !busy || count == {CW{1'b0}}) count <= BIT_LAST;
    else count <= count - 1'b1;
  end

  always @(posedge clk) begin
    valid       <= 1'b0;
    frame_error <= 1'b0;
    if (rst) begin
      line    <= 3'b111;
      busy    <= 1'b0;
      started <= 1'b0;
    end else begin
      line <= {line[1:0], rxd};
      // A falling edge starts a character.
      if (!busy) busy <= line[2] && !settled;
      if (sample) begin
        if (!started) begin
          if (settled) busy <= 1'b0;  // glitch, not a start bit
          else begin
            started <= 1'b1;
            shift   <= 9'h100;
          end
        end else if (in_data) begin
          shift <= {settled, shift[8:1]};
        end else begin
          busy        <= 1'b0;
          started     <= 1'b0;
          valid       <= settled;
          frame_error <= !settled;
        end
      end
    end
  end
endmodule
`;
}
