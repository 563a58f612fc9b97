// CRC-16/IBM-3740 register in Verilog-2001: poly 0x1021, init 0xFFFF, unreflected, xorout 0.
// It consumes one byte per enabled clock, most significant bit first, matching ../crc.ts exactly.

/** ts_crc16: `init` loads 0xFFFF; each enabled clock folds in `data`; `crc` is the register itself. */
export function crc16Verilog(): string {
  return `// ts_crc16: CRC-16/IBM-3740 (poly 0x1021, init 0xFFFF, no reflection, xorout 0x0000), one byte per clock.
// init has priority over enable. The CRC of the bytes so far is the register value.
module ts_crc16 (
  input  wire        clk,
  input  wire        init,
  input  wire        enable,
  input  wire [7:0]  data,
  output reg  [15:0] crc
);
  localparam [15:0] POLY = 16'h1021;
  localparam [15:0] INIT = 16'hFFFF;

  // Eight steps of the polynomial division, unrolled by synthesis into XOR trees.
  function [15:0] next_crc;
    input [15:0] current;
    input [7:0]  byte_in;
    integer i;
    reg [15:0] r;
    begin
      r = current;
      for (i = 7; i >= 0; i = i - 1)
        r = {r[14:0], 1'b0} ^ ((r[15] ^ byte_in[i]) ? POLY : 16'h0000);
      next_crc = r;
    end
  endfunction

  always @(posedge clk) begin
    if (init) crc <= INIT;
    else if (enable) crc <= next_crc(crc, data);
  end
endmodule
`;
}
