// Shared pieces of the generic Verilog-2001 blocks: the module name prefix and a constant log2 function.
// Verilog-2001 has no $clog2, so every module that sizes a counter from a parameter carries this function.

/** Every generic module is named with this prefix so it cannot clash with a user's design. */
export const MODULE_PREFIX = 'ts_';

/** Defined with the HDL text helpers (one stage down, so core/hdl can use it too); re-exported for the blocks here. */
export { CLOG2_FUNCTION } from '../../hdl/verilog-text';
