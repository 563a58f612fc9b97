// Published test vectors shared by the protocol tests (TypeScript and Verilog), kept in one place
// so that both implementations are held to the same outside examples.

const range = (from: number, to: number) => Array.from({ length: to - from + 1 }, (_, i) => from + i);

/**
 * Encoding examples as reproduced in the Wikipedia article "Consistent Overhead Byte Stuffing"
 * (quoted from memory; shown there with the trailing 0x00 delimiter, which is left out here).
 */
export const COBS_PUBLISHED: Array<{ name: string; data: number[]; encoded: number[] }> = [
  { name: '00', data: [0x00], encoded: [0x01, 0x01] },
  { name: '00 00', data: [0x00, 0x00], encoded: [0x01, 0x01, 0x01] },
  { name: '00 11 00', data: [0x00, 0x11, 0x00], encoded: [0x01, 0x02, 0x11, 0x01] },
  { name: '11 22 00 33', data: [0x11, 0x22, 0x00, 0x33], encoded: [0x03, 0x11, 0x22, 0x02, 0x33] },
  { name: '11 22 33 44', data: [0x11, 0x22, 0x33, 0x44], encoded: [0x05, 0x11, 0x22, 0x33, 0x44] },
  { name: '11 00 00 00', data: [0x11, 0x00, 0x00, 0x00], encoded: [0x02, 0x11, 0x01, 0x01, 0x01] },
  { name: '01..FE (254 bytes)', data: range(0x01, 0xfe), encoded: [0xff, ...range(0x01, 0xfe)] },
  { name: '00 01..FE (255 bytes)', data: [0x00, ...range(0x01, 0xfe)], encoded: [0x01, 0xff, ...range(0x01, 0xfe)] },
  { name: '01..FF (255 bytes)', data: range(0x01, 0xff), encoded: [0xff, ...range(0x01, 0xfe), 0x02, 0xff] },
  { name: '02..FF 00 (255 bytes)', data: [...range(0x02, 0xff), 0x00], encoded: [0xff, ...range(0x02, 0xff), 0x01, 0x01] },
  { name: '03..FF 00 01 (255 bytes)', data: [...range(0x03, 0xff), 0x00, 0x01], encoded: [0xfe, ...range(0x03, 0xff), 0x02, 0x01] },
];

