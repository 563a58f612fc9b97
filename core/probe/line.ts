// A model of the serial line between board and host: the 8N1 bit stream of the bytes sent, re-sampled by a
// receiver whose baud differs from the sender's, as a host with a wrongly set port would see it.
import { SeededRandom } from '../util/prng';

/**
 * Resolution of the receiver's start-edge detection, in receiver bit times. Common practice: a UART receiver
 * oversamples 16 times per bit, so it notices the start edge up to 1/16 bit late.
 */
export const EDGE_RESOLUTION = 1 / 16;

/**
 * What a character with a low stop bit is delivered as. On Linux, a port without IGNPAR and PARMRK hands a
 * character with a framing error to the program as 0x00 (termios(3); quoted from memory).
 */
export const FRAMING_ERROR_BYTE = 0x00;

export type ResamplerStats = { bytesIn: number; bytesOut: number; framingErrors: number };

/**
 * Re-samples back-to-back 8N1 characters. Time is counted in the sender's bit times; the receiver's bit lasts
 * 1 / ratio of them. For each falling edge (high bit followed by low bit) the receiver waits a seeded
 * detection delay, then samples at the middle of each of its own bit times: start, 8 data bits LSB first, stop.
 */
export class UartResampler {
  private bits: number[] = [1]; // the line idles high before the first character
  private base = 0; // absolute index of bits[0]
  private searchFrom = 1; // earliest boundary where the next start edge may be
  private pendingDetect: number | null = null; // detection time of a start edge whose character is not complete yet
  private readonly rng: SeededRandom;
  private readonly bitTime: number;
  readonly stats: ResamplerStats = { bytesIn: 0, bytesOut: 0, framingErrors: 0 };

  constructor(
    readonly ratio: number,
    seed: number,
  ) {
    this.rng = new SeededRandom(seed);
    this.bitTime = 1 / ratio;
  }

  /** Characters sent by the board; returns the bytes the receiver has completed so far. */
  push(bytes: Uint8Array): number[] {
    for (const b of bytes) {
      this.bits.push(0);
      for (let i = 0; i < 8; i++) this.bits.push((b >> i) & 1);
      this.bits.push(1);
    }
    this.stats.bytesIn += bytes.length;
    return this.drain();
  }

  /** The line goes idle (the board has stopped sending): complete any character in progress. */
  idle(): number[] {
    const needed = Math.ceil(11 * this.bitTime) + 2;
    for (let i = 0; i < needed; i++) this.bits.push(1);
    const out = this.drain();
    // Idle time is not a place where an edge can hide: later characters start after it.
    this.searchFrom = Math.max(this.searchFrom, this.base + this.bits.length);
    return out;
  }

  private level(t: number): number {
    return this.bits[Math.floor(t) - this.base];
  }

  private get end(): number {
    return this.base + this.bits.length;
  }

  private drain(): number[] {
    const out: number[] = [];
    for (;;) {
      if (this.pendingDetect === null) {
        const edge = this.findEdge();
        if (edge === null) break;
        this.pendingDetect = edge + this.rng.float() * EDGE_RESOLUTION * this.bitTime;
      }
      const detect = this.pendingDetect;
      const lastSample = detect + 9.5 * this.bitTime;
      if (Math.floor(lastSample) >= this.end) break; // wait for more of the line
      this.pendingDetect = null;
      const startSample = detect + 0.5 * this.bitTime;
      if (this.level(startSample) === 1) {
        // Gone by the middle of the start bit: a glitch, not a character.
        this.searchFrom = Math.ceil(startSample);
        continue;
      }
      let byte = 0;
      for (let i = 0; i < 8; i++) byte |= this.level(detect + (1.5 + i) * this.bitTime) << i;
      if (this.level(lastSample) === 1) out.push(byte);
      else {
        this.stats.framingErrors++;
        out.push(FRAMING_ERROR_BYTE);
      }
      this.searchFrom = Math.max(Math.ceil(lastSample), Math.floor(lastSample) + 1);
    }
    this.trim();
    this.stats.bytesOut += out.length;
    return out;
  }

  /** First boundary i >= searchFrom with a high bit before it and a low bit after it. */
  private findEdge(): number | null {
    for (let i = Math.max(this.searchFrom, this.base + 1); i < this.end; i++) {
      if (this.bits[i - 1 - this.base] === 1 && this.bits[i - this.base] === 0) return i;
    }
    this.searchFrom = Math.max(this.searchFrom, this.end);
    return null;
  }

  private trim(): void {
    const keepFrom = Math.min(this.searchFrom, this.pendingDetect === null ? Infinity : Math.floor(this.pendingDetect)) - 2;
    const drop = keepFrom - this.base;
    if (drop > 4096) {
      this.bits = this.bits.slice(drop);
      this.base += drop;
    }
  }
}
