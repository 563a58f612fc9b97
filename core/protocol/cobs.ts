// Consistent Overhead Byte Stuffing (Cheshire and Baker, 1999): removes every 0x00 from a frame so that
// 0x00 can mark frame ends on the wire. Encoding never adds a delimiter; the framing layer appends it.

/** Most data bytes one code byte can cover; a run this long ends without an implied zero. */
export const COBS_MAX_RUN = 254;

/** Upper bound on the encoded size of `n` data bytes (one code byte per started run of 254). */
export function cobsMaxEncodedLength(n: number): number {
  return n + Math.floor(n / COBS_MAX_RUN) + 1;
}

/**
 * Encode `data` (may contain any bytes). A full run of 254 non-zero bytes is closed with code 0xFF
 * only when more data follows, so 254 non-zero bytes encode to 0xFF plus the data with no trailing
 * code byte: the shortest form, and the one the published examples show.
 */
export function cobsEncode(data: Uint8Array): Uint8Array {
  const out = new Uint8Array(cobsMaxEncodedLength(data.length));
  let codeAt = 0;
  let w = 1;
  let code = 1;
  for (let i = 0; i < data.length; i++) {
    const b = data[i];
    if (b === 0) {
      out[codeAt] = code;
      codeAt = w++;
      code = 1;
      continue;
    }
    out[w++] = b;
    code++;
    if (code === 0xff && i + 1 < data.length) {
      out[codeAt] = code;
      codeAt = w++;
      code = 1;
    }
  }
  out[codeAt] = code;
  return out.subarray(0, w);
}

export type CobsDecodeResult = { ok: true; data: Uint8Array } | { ok: false; message: string; at: number };

/** Failure codes of `cobsDecodeInto`: negative so that a length is never mistaken for one. */
export const COBS_EMPTY = -1;
export const COBS_ZERO_INSIDE = -2;
export const COBS_OVERRUN = -3;
export const COBS_TOO_LONG = -4;

/**
 * Decode `src[0, srcLength)` into `dst` without allocating (the stream decoder's hot path).
 * Returns the decoded length, or a negative COBS_* code; never throws and never writes past `dst`.
 */
export function cobsDecodeInto(src: Uint8Array, srcLength: number, dst: Uint8Array): number {
  if (srcLength <= 0) return COBS_EMPTY;
  let r = 0;
  let w = 0;
  while (r < srcLength) {
    const code = src[r++];
    if (code === 0) return COBS_ZERO_INSIDE;
    const runEnd = r + code - 1;
    if (runEnd > srcLength) return COBS_OVERRUN;
    while (r < runEnd) {
      const b = src[r++];
      if (b === 0) return COBS_ZERO_INSIDE;
      if (w >= dst.length) return COBS_TOO_LONG;
      dst[w++] = b;
    }
    // The implied zero after a short run is part of the data unless this run ends the frame.
    if (code !== 0xff && r < srcLength) {
      if (w >= dst.length) return COBS_TOO_LONG;
      dst[w++] = 0;
    }
  }
  return w;
}

/** Human-readable text for a negative `cobsDecodeInto` result. */
export function cobsErrorText(code: number): string {
  switch (code) {
    case COBS_EMPTY:
      return 'empty COBS frame';
    case COBS_ZERO_INSIDE:
      return 'a 0x00 byte inside a COBS frame';
    case COBS_OVERRUN:
      return 'a COBS code byte points past the end of the frame';
    case COBS_TOO_LONG:
      return 'COBS frame decodes to more bytes than allowed';
    default:
      return `COBS error ${code}`;
  }
}

/** Decode one encoded frame (without its 0x00 delimiter), reporting where it went wrong. */
export function cobsDecode(encoded: Uint8Array, maxLength = encoded.length): CobsDecodeResult {
  const dst = new Uint8Array(Math.max(0, maxLength));
  const n = cobsDecodeInto(encoded, encoded.length, dst);
  if (n >= 0) return { ok: true, data: dst.slice(0, n) };
  return { ok: false, message: cobsErrorText(n), at: locateCobsError(encoded) };
}

/** Byte offset of the first offending byte (for messages only; the decode above is the authority). */
function locateCobsError(src: Uint8Array): number {
  let r = 0;
  while (r < src.length) {
    const codeAt = r;
    const code = src[r++];
    if (code === 0) return codeAt;
    const runEnd = r + code - 1;
    if (runEnd > src.length) return codeAt;
    for (; r < runEnd; r++) if (src[r] === 0) return r;
  }
  return src.length;
}
