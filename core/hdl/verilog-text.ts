// Verilog text shared by every generator: Verilog-2001 has no $clog2, so each module that sizes a
// counter from a parameter carries this constant function.

/** Constant function: bits needed to hold 0 .. value-1 (at least 1). Paste inside a module body. */
export const CLOG2_FUNCTION = `  // Bits needed to count 0 .. value-1 (at least 1); a constant function, since Verilog-2001 lacks $clog2.
  function integer clog2;
    input integer value;
    integer v;
    begin
      clog2 = 1;
      for (v = 2; v < value; v = v * 2) clog2 = clog2 + 1;
    end
  endfunction
`;
