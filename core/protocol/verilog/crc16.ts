// Bit-serial CRC-16 register in Verilog-2001 for the polynomial 0x1021, init 0xFFFF, xorout 0: unreflected
// (CRC-16/IBM-3740, the frames' check word, ../crc.ts) or reflected (CRC-16/MCRF4XX, the host commands' check
// word, ../commands.ts). One message bit per enabled clock: about a quarter of the logic of a byte-wide register.

/** ts_crc16: `init` loads 0xFFFF; each enabled clock folds in one message bit; `crc` is the register itself. */
export function crc16Verilog(): string {
  return `// ts_crc16: CRC-16 with poly 0x1021, init 0xFFFF and xorout 0x0000, one message bit per enabled clock.
// REFLECTED = 0: CRC-16/IBM-3740; feed each byte most significant bit first; the CRC is the register.
// REFLECTED = 1: CRC-16/MCRF4XX; feed each byte least significant bit first, as a UART carries it; the CRC is
// the register (reflection makes it the bit-reversed polynomial, 0x8408, shifting right).
// init has priority over enable. For both, a message followed by its own CRC (high byte first for IBM-3740,
// low byte first for MCRF4XX) leaves the register at 0x0000.
module ts_crc16 #(
  parameter integer REFLECTED = 0
) (
  input  wire        clk,
  input  wire        init,
  input  wire        enable,
  input  wire        data,
  output reg  [15:0] crc
);
  localparam [15:0] POLY     = 16'h1021;
  localparam [15:0] POLY_REV = 16'h8408;
  localparam [15:0] INIT     = 16'hFFFF;

  wire feedback = (REFLECTED != 0 ? crc[0] : crc[15]) ^ data;

  always @(posedge clk) begin
    if (init) crc <= INIT;
    else if (enable) begin
      if (REFLECTED != 0) crc <= {1'b0, crc[15:1]} ^ (feedback ? POLY_REV : 16'h0000);
      else                crc <= {crc[14:0], 1'b0} ^ (feedback ? POLY : 16'h0000);
    end
  end
endmodule
`;
}
