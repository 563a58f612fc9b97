// Frame packer in Verilog-2001: latches a payload bus and the cycle counter, then streams the frame on the wire
// (header, payload bytes, CRC high then low, COBS-stuffed and followed by 0x00) one bit at a time into the UART
// transmitter, preceded by an identification frame after reset and at counter wraps.
import { CLOG2_FUNCTION } from './common';
import { LAYOUT_VERSION } from '../frame';

/**
 * ts_frame_packer: the design side of the lockstep handshake. A frame is taken on a rising edge where
 * `start && ready`; payload and cycle are sampled on that edge and may change right after it. It feeds
 * ts_uart_tx one bit at a time with the wire stream: the frame stuffed with COBS and closed by 0x00.
 *
 * COBS needs to know how far the next zero is before a run can start. A raw frame is at most 254 bytes and the
 * packer holds all of it (the latched payload, constants, the CRC register), so instead of buffering a run it
 * first walks the whole frame once, bit by bit: the body bits go into a bit-serial CRC register and every byte
 * leaves a flag saying whether it is zero. Sending then needs only those flags: before each run it counts the
 * flags up to the next zero (the code byte), and it reads each byte's bits straight from the held frame.
 */
export function framePackerVerilog(): string {
  return `// ts_frame_packer: builds probe frames and sends them COBS-stuffed. payload bit k travels as bit (k mod 8) of
// payload byte k/8, so a design drives payload = {field_n-1, ..., field_1, field_0}. A cycle frame is header
// {0, cycle[6:0]}, the payload bytes and CRC-16/IBM-3740 (high byte first). An identification frame (header
// 0x80, version, FINGERPRINT, PAYLOAD_BITS, {after_reset, cycle}) goes before the first cycle frame after reset
// and before every cycle frame whose cycle[ID_EVERY_LOG2-1:0] is zero (ID_EVERY_LOG2 from 1 to 7; 7 = once per
// counter wrap, every 128 frames). Each frame leaves as COBS(frame) followed by 0x00, through ts_uart_tx's
// bit interface (tx_valid, tx_bit, tx_last, tx_advance). ready is low from the taking edge until the last bit
// of the last delimiter has been read.
//
// Stuffing without a buffer: after taking a frame the packer walks it once, most significant bit of each byte
// first, into a bit-serial CRC register, and notes for every byte whether it is zero (two copies of the flags).
// To send, it counts one copy's flags up to the next zero (the run's code byte), sends the code, then reads the
// run's bytes straight from the frame, least significant bit first, until the other copy's flags say a zero
// (skipped: the next code stands for it) or the frame's end (the delimiter follows) has come.
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
  output wire                    tx_valid,
  output wire                    tx_bit,
  output wire                    tx_last,
  input  wire                    tx_advance
);
${CLOG2_FUNCTION}
  localparam integer PAYLOAD_BYTES = (PAYLOAD_BITS + 7) / 8;
  localparam integer PAD_BITS      = PAYLOAD_BYTES * 8 - PAYLOAD_BITS;
  localparam integer CYCLE_BODY    = PAYLOAD_BYTES + 1;        // header + payload
  localparam integer ID_BODY       = 9;                        // header + 8 body bytes
  localparam integer CYCLE_LEN     = CYCLE_BODY + 2;           // with the CRC
  localparam integer ID_LEN        = ID_BODY + 2;
  localparam integer LONGEST       = CYCLE_LEN > ID_LEN ? CYCLE_LEN : ID_LEN;
  localparam integer IW            = clog2(LONGEST + 1);       // byte index 0 .. LONGEST (= past the end)
  localparam integer KW            = clog2(LONGEST + 2);       // COBS code 1 .. LONGEST + 1
  localparam integer FW            = LONGEST + 1;              // zero flags: every byte, then the end
  localparam [IW-1:0] CYCLE_CRC_AT = CYCLE_BODY[IW-1:0];
  localparam [IW-1:0] ID_CRC_AT    = ID_BODY[IW-1:0];
  localparam [IW-1:0] CYCLE_END    = CYCLE_LEN[IW-1:0];
  localparam [IW-1:0] ID_END       = ID_LEN[IW-1:0];
  localparam [7:0]  LAYOUT_VERSION = 8'd${LAYOUT_VERSION};
  localparam [15:0] WIDTH_FIELD    = PAYLOAD_BITS[15:0];
  localparam [63:0] ID_FIXED       = {WIDTH_FIELD[7:0], WIDTH_FIELD[15:8], FINGERPRINT[7:0], FINGERPRINT[15:8],
                                      FINGERPRINT[23:16], FINGERPRINT[31:24], LAYOUT_VERSION, 8'h80};

  localparam [2:0] S_IDLE  = 3'd0;  // waiting for start
  localparam [2:0] S_WALK  = 3'd1;  // walking the frame: CRC and zero flags
  localparam [2:0] S_COUNT = 3'd2;  // counting the next run's length from the flags
  localparam [2:0] S_CODE  = 3'd3;  // sending the run's code byte
  localparam [2:0] S_DATA  = 3'd4;  // sending the run's bytes
  localparam [2:0] S_DELIM = 3'd5;  // sending the 0x00 delimiter

  reg [PAYLOAD_BITS-1:0] held;          // payload latched at start
  reg [6:0]              held_cycle;
  reg [2:0]              state;
  reg [IW-1:0]           idx;           // byte of the frame being walked or sent
  reg                    in_body;       // idx is before the CRC
  // Bit of that byte: sent least significant first, counting up; walked most significant first, counting down
  // (the CRC takes that order), so that both read the frame through the same select.
  reg [2:0]              bit_no;
  reg                    seen_one;      // walking: a 1 bit seen in this byte so far
  reg [KW-1:0]           code;          // the run's COBS code byte: bytes in the run + 1
  // Zero flags, the first byte's in the bit the frame's length selects: one copy is consumed while counting
  // runs, the other while sending them, so each always has the flag of the next byte it needs at its head.
  reg [FW-1:0]           count_flags, send_flags;
  reg                    id_frame;      // the current frame is an identification frame
  reg                    after_reset;   // no identification frame sent since reset
  wire [15:0]            crc;

  wire [IW-1:0] crc_at  = id_frame ? ID_CRC_AT : CYCLE_CRC_AT;  // index of the CRC's high byte
  wire [IW-1:0] end_at  = id_frame ? ID_END : CYCLE_END;        // one past the CRC's low byte
  wire          at_end  = idx == end_at;
  wire          walking = state == S_WALK;
  wire          byte_done = tx_advance && tx_last;

  // The latched payload zero-padded to whole bytes (a zero-width replication is not Verilog-2001).
  wire [PAYLOAD_BYTES*8-1:0] padded;
  assign padded[PAYLOAD_BITS-1:0] = held;
  generate
    if (PAD_BITS > 0) begin : pad
      assign padded[PAYLOAD_BYTES*8-1:PAYLOAD_BITS] = {PAD_BITS{1'b0}};
    end
  endgenerate

  // Both frames' bodies as bit vectors indexed by {idx, bit_no}: byte i is bits [8i+7:8i], header first. The
  // CRC follows the body, high byte first; its two bytes are told apart by the low bit of idx. Past the body no
  // state uses these vectors, so the rest of the index range is left open (x) for synthesis to fill as it likes.
  localparam integer AW = IW + 3;
  wire [(1 << AW)-1:0] cycle_bits = {{((1 << AW) - CYCLE_BODY*8){1'bx}}, padded, 1'b0, held_cycle};
  wire [(1 << AW)-1:0] id_bits    = {{((1 << AW) - ID_BODY*8){1'bx}}, after_reset, held_cycle, ID_FIXED};
  wire [AW-1:0]        at         = {idx, bit_no};
  wire                 crc_bit    = crc[{idx[0] == crc_at[0], bit_no}];
  wire                 frame_bit  = !in_body ? crc_bit : id_frame ? id_bits[at] : cycle_bits[at];

  wire count_head = id_frame ? count_flags[ID_LEN] : count_flags[CYCLE_LEN];
  wire send_head  = id_frame ? send_flags[ID_LEN] : send_flags[CYCLE_LEN];

  wire [7:0] code_byte;
  generate
    if (KW < 8) begin : code_pad
      assign code_byte = {{(8-KW){1'b0}}, code};
    end else begin : code_full
      assign code_byte = code;
    end
  endgenerate

  assign tx_valid = (state == S_CODE) || (state == S_DATA && !send_head) || (state == S_DELIM);
  assign tx_bit   = (state == S_CODE) ? code_byte[bit_no] : (state == S_DATA) && frame_bit;
  assign tx_last  = bit_no == 3'd7;
  assign ready    = (state == S_IDLE);

  wire take     = start && (state == S_IDLE);
  wire next_id  = (state == S_DELIM) && byte_done && id_frame;  // the cycle frame follows its identification
  // Bytes 0 .. end_at - 1 are walked 8 clocks each, then one clock at end_at flags the end like a zero.
  wire flag_now = walking && (at_end || bit_no == 3'd0);
  wire flag     = at_end || !(seen_one || frame_bit);
  wire skip     = (state == S_DATA) && send_head && !at_end;  // the zero a code byte stands for

  ts_crc16 #(.REFLECTED (0)) check_word (
    .clk (clk), .init (take || next_id), .enable (walking && in_body), .data (frame_bit), .crc (crc)
  );

  // idx goes back to 0 for each walk and for sending, and otherwise only ever steps forward: past each walked
  // byte, past each byte sent and past each zero skipped.
  wire idx_clear = take || (walking && at_end) || next_id;
  wire idx_step  = (walking && !at_end && bit_no == 3'd0) || skip || (state == S_DATA && !send_head && byte_done);
  always @(posedge clk) begin
    if (idx_clear) begin
      idx     <= {IW{1'b0}};
      in_body <= 1'b1;
    end else if (idx_step) begin
      idx <= idx + 1'b1;
      if (idx == crc_at - 1'b1) in_body <= 1'b0;
    end
  end

  always @(posedge clk) begin
    if (take) begin
      held       <= payload;
      held_cycle <= cycle;
    end
  end

  // The code starts at 1 for each run and counts the run's bytes while their flags are consumed.
  always @(posedge clk) begin
    if ((walking && at_end) || skip) code <= {{(KW-1){1'b0}}, 1'b1};
    else if (state == S_COUNT && !count_head) code <= code + 1'b1;
  end

  always @(posedge clk) begin
    if (flag_now) begin
      count_flags <= {count_flags[FW-2:0], flag};
      send_flags  <= {send_flags[FW-2:0], flag};
    end else begin
      if ((state == S_COUNT && !count_head) || skip) count_flags <= {count_flags[FW-2:0], 1'b0};
      if ((state == S_DATA && byte_done) || skip) send_flags <= {send_flags[FW-2:0], 1'b0};
    end
  end

  always @(posedge clk) begin
    if (rst) begin
      // The frame registers (held, idx, in_body, code, flags) are all loaded before they are read.
      state       <= S_IDLE;
      id_frame    <= 1'b0;
      after_reset <= 1'b1;
      bit_no      <= 3'd0;
      seen_one    <= 1'b0;
    end else begin
      // Idle, bit_no is 0: taking a frame turns it to 7 for the walk, which ends on 7 again and turns it to 0
      // for sending; after an identification frame's delimiter it stays at 7 for the cycle frame's walk.
      if (take || (walking && !at_end)) bit_no <= bit_no - 3'd1;
      else if ((tx_advance && !next_id) || walking) bit_no <= bit_no + 3'd1;
      if (walking && !at_end) seen_one <= (seen_one || frame_bit) && bit_no != 3'd0;
      case (state)
        S_IDLE: if (take) begin
          id_frame   <= after_reset || (cycle[ID_EVERY_LOG2-1:0] == {ID_EVERY_LOG2{1'b0}});
          state      <= S_WALK;
        end
        S_WALK: if (at_end) state <= S_COUNT;
        S_COUNT: if (count_head) state <= S_CODE;
        S_CODE: if (byte_done) state <= S_DATA;
        S_DATA: if (send_head) begin
          // The run is out. At the frame's end the delimiter follows; otherwise the zero is skipped (the next
          // code byte stands for it) and the next run is counted.
          if (at_end) state <= S_DELIM;
          else state <= S_COUNT;
        end
        S_DELIM: if (byte_done) begin
          if (id_frame) begin
            id_frame    <= 1'b0;
            after_reset <= 1'b0;
            state       <= S_WALK;
          end else begin
            state <= S_IDLE;
          end
        end
        default: state <= S_IDLE;
      endcase
    end
  end
endmodule
`;
}
