// CRC-32/ISO-HDLC (reflected poly 0xEDB88320, init and xorout 0xFFFFFFFF): the check word of every capture
// record, strong enough to tell a torn or damaged record from a good one when scanning for the next.

const TABLE = (() => {
  const t = new Uint32Array(256);
  for (let i = 0; i < 256; i++) {
    let c = i;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[i] = c >>> 0;
  }
  return t;
})();

/** Continue a CRC-32 over bytes[start, end); pass the previous result (0 to begin). */
export function crc32(bytes: Uint8Array, start = 0, end = bytes.length, previous = 0): number {
  let c = ~previous >>> 0;
  for (let i = start; i < end; i++) c = TABLE[(c ^ bytes[i]) & 0xff] ^ (c >>> 8);
  return ~c >>> 0;
}
