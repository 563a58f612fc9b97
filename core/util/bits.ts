// Bit-vector arithmetic on bigint bit patterns: the exact reference every model and emitter agrees with.
// A value is always held as its unsigned bit pattern at a given width (0 <= v < 2^width).

export function maskOf(width: number): bigint {
  return (1n << BigInt(width)) - 1n;
}

/** Wrap any integer to the bit pattern of `width` bits (two's complement for negatives). */
export function wrap(value: bigint, width: number): bigint {
  return value & maskOf(width);
}

/** Read a bit pattern as a signed two's-complement integer. */
export function toSigned(bits: bigint, width: number): bigint {
  const sign = 1n << BigInt(width - 1);
  return bits & sign ? bits - (1n << BigInt(width)) : bits;
}

/** Interpret a bit pattern by the given signedness. */
export function toNumberValue(bits: bigint, width: number, signed: boolean): bigint {
  return signed ? toSigned(bits, width) : bits;
}

/** Extend a bit pattern from `from` bits to `to` bits (to >= from), by sign when `signed`. */
export function extend(bits: bigint, from: number, to: number, signed: boolean): bigint {
  if (to <= from) return wrap(bits, to);
  if (signed && bits & (1n << BigInt(from - 1))) return bits | (maskOf(to) ^ maskOf(from));
  return bits;
}

/** Bits needed to hold a non-negative integer (at least 1). */
export function bitLength(value: bigint): number {
  let n = 0;
  let v = value < 0n ? -value : value;
  while (v > 0n) {
    n++;
    v >>= 1n;
  }
  return Math.max(n, 1);
}

/** Does the integer `value` fit a `width`-bit type of the given signedness? */
export function fits(value: bigint, width: number, signed: boolean): boolean {
  if (signed) {
    const half = 1n << BigInt(width - 1);
    return value >= -half && value < half;
  }
  return value >= 0n && value <= maskOf(width);
}

/** Format a bit pattern for people: decimal by the type's signedness. */
export function formatValue(bits: bigint, width: number, signed: boolean, radix: 'dec' | 'hex' | 'bin' = 'dec'): string {
  if (radix === 'hex') return '0x' + bits.toString(16).padStart(Math.ceil(width / 4), '0');
  if (radix === 'bin') return '0b' + bits.toString(2).padStart(width, '0');
  return toNumberValue(bits, width, signed).toString();
}
