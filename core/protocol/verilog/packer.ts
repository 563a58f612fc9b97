// Frame packer in Verilog-2001: latches a payload bus and the cycle counter, then streams the raw frame
// (header, payload bytes, CRC high then low), preceded by an identification frame after reset and at counter wraps.
import { CLOG2_FUNCTION } from './common';
import { LAYOUT_VERSION } from '../frame';

/**
 * ts_frame_packer: the design side of the lockstep handshake. A frame is taken on a rising edge where
 * `start && ready`; payload and cycle are sampled on that edge and may change right after it. The output is a
 * raw frame byte stream (with `out_last`) for ts_cobs_stuffer; ts_crc16 computes the check word on the way.
 */
export function framePackerVerilog(): string {
  return `// ts_frame_packer: builds probe frames. payload bit k travels as bit (k mod 8) of payload byte k/8, so a
// design drives payload = {field_n-1, ..., field_1, field_0}. A cycle frame is header {0, cycle[6:0]},
// the payload bytes and CRC-16/IBM-3740 (high byte first). An identification frame (header 0x80, version,
// FINGERPRINT, PAYLOAD_BITS, {after_reset, cycle}) goes before the first cycle frame after reset and before
// every cycle frame whose cycle[ID_EVERY_LOG2-1:0] is zero (ID_EVERY_LOG2 from 1 to 7; 7 = once per counter
// wrap, every 128 frames). ready is low from the taking edge until the last byte has been taken.
module ts_frame_packer #(
  parameter integer PAYLOAD_BITS  = 32,
  parameter [31:0]  FINGERPRINT   = 32'h00000000,
  parameter integer ID_EVERY_LOG2 = 7
) (
  input  wire                    clk,
  input  wire                    rst,
  input  wire                    start,
  input  wire [PAYLOAD_BITS-1:0] payload,
  input  wire [6:0]              cycle,
  output wire                    ready,
  output wire [7:0]              out_data,
  output wire                    out_valid,
  output wire                    out_last,
  input  wire                    out_ready
);
${CLOG2_FUNCTION}
  localparam integer PAYLOAD_BYTES = (PAYLOAD_BITS + 7) / 8;
  localparam integer PAD_BITS      = PAYLOAD_BYTES * 8 - PAYLOAD_BITS;
  localparam integer CYCLE_BODY    = PAYLOAD_BYTES + 1;        // header + payload
  localparam integer ID_BODY       = 9;                        // header + 8 body bytes
  localparam integer LONGEST       = (CYCLE_BODY > ID_BODY ? CYCLE_BODY : ID_BODY) + 2;
  localparam integer IW            = clog2(LONGEST);
  localparam [IW-1:0] CYCLE_CRC_AT = CYCLE_BODY[IW-1:0];
  localparam [IW-1:0] ID_CRC_AT    = ID_BODY[IW-1:0];
  localparam [7:0]  LAYOUT_VERSION = 8'd${LAYOUT_VERSION};
  localparam [15:0] WIDTH_FIELD    = PAYLOAD_BITS[15:0];

  reg [PAYLOAD_BITS-1:0]    held;          // payload latched at start
  reg [6:0]                 held_cycle;
  reg [IW-1:0]              idx;           // byte of the current frame being offered
  reg                       sending;
  reg                       id_frame;      // the current frame is an identification frame
  reg                       after_reset;   // no identification frame sent since reset
  // Only the CRC's high byte is read: the low byte reaches it by the shift described at out_data.
  /* verilator lint_off UNUSEDSIGNAL */
  wire [15:0]               crc;
  /* verilator lint_on UNUSEDSIGNAL */

  wire [IW-1:0] crc_at   = id_frame ? ID_CRC_AT : CYCLE_CRC_AT;  // index of the CRC's high byte
  wire          in_body  = idx < crc_at;
  wire          last     = idx == crc_at + 1'b1;
  wire          accepted = sending && out_ready;

  // The latched payload zero-padded to whole bytes (a zero-width replication is not Verilog-2001).
  wire [PAYLOAD_BYTES*8-1:0] padded;
  assign padded[PAYLOAD_BITS-1:0] = held;
  generate
    if (PAD_BITS > 0) begin : pad
      assign padded[PAYLOAD_BYTES*8-1:PAYLOAD_BITS] = {PAD_BITS{1'b0}};
    end
  endgenerate

  // Cycle frame bytes as one vector: byte i is bits [8i+7:8i], header first.
  wire [CYCLE_BODY*8-1:0] cycle_body = {padded, 1'b0, held_cycle};
  // Past the body this select reads out of range, but then the CRC bytes are sent instead (see out_data).
  wire [7:0] cycle_byte = cycle_body[idx*8 +: 8];

  reg [7:0] id_byte;
  always @* begin
    case (idx[3:0])  // identification frames are 11 bytes: 4 bits of index suffice
      4'd0:    id_byte = 8'h80;
      4'd1:    id_byte = LAYOUT_VERSION;
      4'd2:    id_byte = FINGERPRINT[31:24];
      4'd3:    id_byte = FINGERPRINT[23:16];
      4'd4:    id_byte = FINGERPRINT[15:8];
      4'd5:    id_byte = FINGERPRINT[7:0];
      4'd6:    id_byte = WIDTH_FIELD[15:8];
      4'd7:    id_byte = WIDTH_FIELD[7:0];
      default: id_byte = {after_reset, held_cycle};
    endcase
  end

  wire [7:0] body_byte = id_frame ? id_byte : cycle_byte;
  // After the body the CRC register is clocked with its own high byte: the table term for (high ^ high) = 0
  // is zero, so this just shifts the register left by 8 and the low byte follows the high byte out.
  assign out_data  = in_body ? body_byte : crc[15:8];
  assign out_valid = sending;
  assign out_last  = sending && last;
  assign ready     = !sending;

  wire take = start && !sending;

  ts_crc16 check_word (
    .clk    (clk),
    .init   (take || (accepted && last)),
    .enable (accepted),
    .data   (out_data),
    .crc    (crc)
  );

  always @(posedge clk) begin
    if (rst) begin
      sending     <= 1'b0;
      id_frame    <= 1'b0;
      after_reset <= 1'b1;
      idx         <= {IW{1'b0}};
      held        <= {PAYLOAD_BITS{1'b0}};
      held_cycle  <= 7'd0;
    end else if (take) begin
      held       <= payload;
      held_cycle <= cycle;
      sending    <= 1'b1;
      id_frame   <= after_reset || (cycle[ID_EVERY_LOG2-1:0] == {ID_EVERY_LOG2{1'b0}});
      idx        <= {IW{1'b0}};
    end else if (accepted) begin
      if (!last) begin
        idx <= idx + 1'b1;
      end else if (id_frame) begin
        // The identification frame is out; the cycle frame it announced follows at once.
        id_frame    <= 1'b0;
        after_reset <= 1'b0;
        idx         <= {IW{1'b0}};
      end else begin
        sending <= 1'b0;
      end
    end
  end
endmodule
`;
}
