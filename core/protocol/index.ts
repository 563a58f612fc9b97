// Public face of the probe protocol: CRC, COBS, frame format, stream decoder and the Verilog blocks.
// Later stages import from here rather than from the individual modules.
export * from './crc';
export * from './cobs';
export * from './frame';
export * from './decoder';
export * from './baud';
export * from './verilog/index';
