// Seeded pseudo-random numbers for reproducible stimulus: xoshiro128** (Blackman and Vigna, 2018),
// seeded through splitmix32 so that every seed, including 0, gives a well-mixed state.

export class SeededRandom {
  private s: Uint32Array;

  constructor(seed: number) {
    this.s = new Uint32Array(4);
    let x = seed >>> 0;
    for (let i = 0; i < 4; i++) {
      x = (x + 0x9e3779b9) >>> 0;
      let z = x;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
      this.s[i] = (z ^ (z >>> 16)) >>> 0;
    }
  }

  /** Next 32 random bits as an unsigned number. */
  nextU32(): number {
    const s = this.s;
    const result = Math.imul(rotl(Math.imul(s[1], 5) >>> 0, 7), 9) >>> 0;
    const t = (s[1] << 9) >>> 0;
    s[2] ^= s[0];
    s[3] ^= s[1];
    s[1] ^= s[2];
    s[0] ^= s[3];
    s[2] ^= t;
    s[3] = rotl(s[3], 11);
    return result;
  }

  /** Uniform integer in [0, n) for n <= 2^32. */
  below(n: number): number {
    return Math.floor((this.nextU32() / 4294967296) * n);
  }

  /** Uniform float in [0, 1). */
  float(): number {
    return this.nextU32() / 4294967296;
  }

  /** Uniform bit pattern of `width` bits. */
  bits(width: number): bigint {
    let v = 0n;
    let have = 0;
    while (have < width) {
      v = (v << 32n) | BigInt(this.nextU32());
      have += 32;
    }
    return v & ((1n << BigInt(width)) - 1n);
  }
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}
