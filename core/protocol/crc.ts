// CRC-16/IBM-3740 (poly 0x1021, init 0xFFFF, unreflected, xorout 0): the check word of every probe frame.
// A table-driven form for the host decoder and a bitwise form that mirrors the one-bit-at-a-time hardware.

/** The catalogue entry this module implements, spelled out so the document and the Verilog can quote it. */
export const CRC16_PARAMS = {
  name: 'CRC-16/IBM-3740',
  width: 16,
  poly: 0x1021,
  init: 0xffff,
  refin: false,
  refout: false,
  xorout: 0x0000,
  /** Register left after running a message followed by its own CRC (appended high byte first). */
  residue: 0x0000,
} as const;

const POLY = CRC16_PARAMS.poly;

/** One table entry per value of the register's top byte XOR the incoming byte. */
function buildTable(): Uint16Array {
  const table = new Uint16Array(256);
  for (let i = 0; i < 256; i++) {
    let r = i << 8;
    for (let bit = 0; bit < 8; bit++) r = r & 0x8000 ? ((r << 1) ^ POLY) & 0xffff : (r << 1) & 0xffff;
    table[i] = r;
  }
  return table;
}

const TABLE = buildTable();

/** Continue a CRC over bytes[start, end): table-driven, one lookup per byte. */
export function crc16Update(crc: number, bytes: Uint8Array, start = 0, end = bytes.length): number {
  let r = crc & 0xffff;
  for (let i = start; i < end; i++) r = ((r << 8) & 0xff00) ^ TABLE[((r >>> 8) ^ bytes[i]) & 0xff];
  return r;
}

/** CRC of bytes[start, end) from the catalogue's initial value (xorout is 0, so no final step). */
export function crc16(bytes: Uint8Array, start = 0, end = bytes.length): number {
  return crc16Update(CRC16_PARAMS.init, bytes, start, end) ^ CRC16_PARAMS.xorout;
}

/** Advance the register by one message bit, most significant bit of each byte first, as the hardware does. */
export function crc16StepBit(crc: number, bit: number): number {
  const feedback = ((crc >>> 15) ^ bit) & 1;
  const shifted = (crc << 1) & 0xffff;
  return feedback ? shifted ^ POLY : shifted;
}

/** The same CRC computed bit by bit: slow, but a direct reading of the polynomial division. */
export function crc16Bitwise(bytes: Uint8Array): number {
  let r: number = CRC16_PARAMS.init;
  for (const byte of bytes) {
    for (let bit = 7; bit >= 0; bit--) r = crc16StepBit(r, (byte >>> bit) & 1);
  }
  return r ^ CRC16_PARAMS.xorout;
}
