// The probe's generic Verilog-2001 building blocks, each a function returning module source text.
// None depends on a particular design; a design only sets parameters (payload width, divisor, fingerprint).
export * from './common';
export * from './uart';
export * from './crc16';
export * from './packer';
export * from './link';
