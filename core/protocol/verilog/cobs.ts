// Streaming COBS stuffer in Verilog-2001: raw frame bytes in, stuffed bytes and the 0x00 delimiter out.
// A code byte gives the distance to the next zero, so each run (up to 254 bytes) is buffered before it is sent.

/**
 * ts_cobs_stuffer: collects one run in a 256-byte buffer (a block RAM after synthesis), then sends its code
 * byte and the run, and after the frame's last byte the 0x00 delimiter. A full 254-byte run is closed with
 * code 0xFF; when it is also the frame's end no empty run follows, the same shortest form as ../cobs.ts.
 */
export function cobsStufferVerilog(): string {
  return `// ts_cobs_stuffer: Consistent Overhead Byte Stuffing (Cheshire and Baker, 1999), one frame at a time.
// Input: raw frame bytes with in_last on the final one (valid/ready handshake). Output: the stuffed frame
// followed by a 0x00 delimiter (valid/ready handshake). Input stalls while a run is being sent.
module ts_cobs_stuffer (
  input  wire       clk,
  input  wire       rst,
  input  wire [7:0] in_data,
  input  wire       in_valid,
  input  wire       in_last,
  output wire       in_ready,
  output wire [7:0] out_data,
  output wire       out_valid,
  input  wire       out_ready
);
  localparam [2:0] S_FILL  = 3'd0;  // collecting a run
  localparam [2:0] S_CODE  = 3'd1;  // sending the run's code byte
  localparam [2:0] S_FETCH = 3'd2;  // buffer read in flight
  localparam [2:0] S_DATA  = 3'd3;  // sending a buffered byte, or finding the run's end marker
  localparam [2:0] S_DELIM = 3'd4;  // sending the 0x00 delimiter

  // Yosys would otherwise add logic to mimic a same-address read during a write; read data is never used
  // in a cycle that writes, so the attribute only drops logic that cannot matter.
  (* no_rw_check *)
  reg [7:0] buffer [0:255];
  reg [7:0] read_data;
  reg [2:0] state;
  // While filling: the run's code byte (bytes stored + 1), the bytes sitting at buffer[1..code-1].
  // While sending: the address of the buffered byte being sent; a 0x00 marker ends the run.
  reg [7:0] code;
  reg       end_frame;   // the current run is the frame's last
  reg       tail_one;    // the frame's last byte was 0x00: an empty run (code 0x01) still follows

  wire take     = in_valid && (state == S_FILL);
  wire sent     = out_valid && out_ready;
  wire run_done = (state == S_DATA) && (read_data == 8'h00);

  assign in_ready  = (state == S_FILL);
  assign out_valid = (state == S_CODE) || ((state == S_DATA) && !run_done) || (state == S_DELIM);
  assign out_data  = ((state == S_CODE) ? code : 8'h00) | ((state == S_DATA) ? read_data : 8'h00);

  // Synchronous write and read, the form block-RAM inference expects. Incoming bytes are written as they
  // come (a zero lands where it ends the run); while the code byte goes out, a 0x00 marker is written
  // after the run so the sending side can find its end without a second counter.
  always @(posedge clk) begin
    if (take || state == S_CODE) buffer[code] <= (state == S_CODE) ? 8'h00 : in_data;
    read_data <= buffer[code];
  end

  always @(posedge clk) begin
    if (rst) begin
      state     <= S_FILL;
      code      <= 8'd1;
      end_frame <= 1'b0;
      tail_one  <= 1'b0;
    end else begin
      case (state)
        S_FILL: if (take) begin
          end_frame <= in_last;
          tail_one  <= in_last && (in_data == 8'h00);
          if (in_data != 8'h00) code <= code + 8'd1;
          // A zero, the frame's end, or a full run of 254 bytes (code 0xFF) closes the run.
          if (in_data == 8'h00 || in_last || code == 8'd254) state <= S_CODE;
        end
        S_CODE: if (sent) begin
          code  <= 8'd1;
          state <= S_FETCH;
        end
        S_FETCH: state <= S_DATA;
        S_DATA: if (run_done) begin
          code     <= 8'd1;
          tail_one <= 1'b0;
          state    <= tail_one ? S_CODE : (end_frame ? S_DELIM : S_FILL);
        end else if (sent) begin
          code  <= code + 8'd1;
          state <= S_FETCH;
        end
        S_DELIM: if (sent) state <= S_FILL;
        default: state <= S_FILL;
      endcase
    end
  end
endmodule
`;
}
