// Likely causes behind a run's divergences, worded as hypotheses for the designer to check: a stale
// bitstream, reset trouble, inputs sampled mid-change, a bit stuck at one value, or sporadic bit flips.
// Streaming and bounded: it keeps counters per signal bit and per input, never the divergences themselves.
import type { Machine } from '../ir/schema';
import type { DivergenceVerdict, HintVerdict, IdentityVerdict } from './verdict';

/** Divergences this close to a reset (cycles 0..2 after it) point at the reset itself. */
export const EARLY_AFTER_RESET = 3;
/** A bit needs at least this many divergences, all with the same board value, to look stuck. */
export const STUCK_MIN = 3;
/** Sporadic flips need at least this many isolated single-bit cycles. */
export const FLIPS_MIN = 2;
/** Damaged frames worth a link hint: at least this many, and at least this share of all frames seen. */
export const LINK_ERRORS_MIN = 10;
export const LINK_ERROR_SHARE = 0.05;

/** A hint about the serial link itself, from the decoder's counts. */
export function linkHint(goodFrames: number, damagedFrames: number): HintVerdict | null {
  const total = goodFrames + damagedFrames;
  if (damagedFrames < LINK_ERRORS_MIN || damagedFrames < LINK_ERROR_SHARE * total) return null;
  return {
    kind: 'hint',
    cause: 'link',
    text: 'The serial link damages many frames: the port may be set to another baud than the probe was built for (check --baud against the bitstream\'s), or the cable, its length or the ground between board and adapter may be at fault.',
    evidence: `${damagedFrames} damaged frames against ${goodFrames} good ones (${((damagedFrames / total) * 100).toFixed(1)}%)`,
  };
}

/** All divergences of one cycle, with the input activity around it. */
export interface CycleFinding {
  cycle: number;
  sinceReset: number | null;
  divergences: DivergenceVerdict[];
  /** Inputs that changed in the two cycles before this frame. */
  inputsChanged: string[];
}

interface BitTally {
  count: number;
  ones: number;
  firstCycle: number;
  lastCycle: number;
}

export class Diagnoser {
  private fingerprintMismatch: { first: string; count: number } | null = null;
  private early = { count: 0, first: -1 };
  private cycles = 0;
  private readonly inputHits = new Map<string, number>();
  private readonly bits = new Map<string, BitTally>();
  private readonly isolatedFlips = new Map<string, number>();
  private lastCycle = Number.NEGATIVE_INFINITY;
  private pendingFlip: string | null = null;
  private pendingCycle = -1;

  constructor(private readonly m: Machine) {}

  noteIdentity(v: IdentityVerdict): void {
    if (!v.mismatch || !v.mismatch.includes('fingerprint')) return;
    if (!this.fingerprintMismatch) this.fingerprintMismatch = { first: v.mismatch, count: 0 };
    this.fingerprintMismatch.count++;
  }

  noteCycle(f: CycleFinding): void {
    if (f.divergences.length === 0) return;
    this.cycles++;
    if (f.sinceReset !== null && f.sinceReset < EARLY_AFTER_RESET) {
      if (this.early.count === 0) this.early.first = f.cycle;
      this.early.count++;
    }
    for (const name of f.inputsChanged) this.inputHits.set(name, (this.inputHits.get(name) ?? 0) + 1);
    let totalBits = 0;
    let onlyKey = '';
    for (const d of f.divergences) {
      totalBits += d.differingBits.length;
      for (const b of d.differingBits) {
        const key = `${d.signal}:${b}`;
        onlyKey = key;
        const t = this.bits.get(key) ?? { count: 0, ones: 0, firstCycle: f.cycle, lastCycle: f.cycle };
        t.count++;
        if (d.actualBits[d.actualBits.length - 1 - b] === '1') t.ones++;
        t.lastCycle = f.cycle;
        this.bits.set(key, t);
      }
    }
    // A single-bit cycle counts as a sporadic flip only if no divergence touches the cycles next to it.
    const adjacent = f.cycle - this.lastCycle <= 1;
    if (adjacent) this.pendingFlip = null;
    else this.commitFlip();
    if (!adjacent && totalBits === 1) {
      this.pendingFlip = onlyKey;
      this.pendingCycle = f.cycle;
    }
    this.lastCycle = f.cycle;
  }

  private commitFlip(): void {
    if (this.pendingFlip !== null) this.isolatedFlips.set(this.pendingFlip, (this.isolatedFlips.get(this.pendingFlip) ?? 0) + 1);
    this.pendingFlip = null;
  }

  /**
   * The hypotheses the evidence supports. `inputChangeRate` gives, per input, the fraction of compared cycles
   * in which it changed, so coincidences are judged against how busy the input is anyway.
   */
  hints(comparedCycles: number, inputChangeRate: ReadonlyMap<string, number>): HintVerdict[] {
    this.commitFlip();
    const hints: HintVerdict[] = [];
    if (this.fingerprintMismatch) {
      hints.push({
        kind: 'hint',
        cause: 'stale-bitstream',
        text: 'The board may be running another build of the design (a stale bitstream, or the board programmed from another project): rebuild from this design file and program the board again before reading anything into the divergences.',
        evidence: `${this.fingerprintMismatch.count} identification frame${this.fingerprintMismatch.count === 1 ? '' : 's'} disagreed: ${this.fingerprintMismatch.first}`,
      });
    }
    if (this.early.count > 0) {
      hints.push({
        kind: 'hint',
        cause: 'reset',
        text: 'Divergences right after reset suggest a reset problem: the reset pin polarity (active low vs active high in the constraints and the generated top), a reset released before the clock is stable, or a reset that does not reach every flip-flop.',
        evidence: `${this.early.count} divergent cycle${this.early.count === 1 ? '' : 's'} within ${EARLY_AFTER_RESET} cycles of a reset, first at cycle ${this.early.first}`,
      });
    }
    for (const [name, hits] of this.inputHits) {
      const rate = inputChangeRate.get(name) ?? 0;
      // Chance that a random cycle has a change in the two-cycle window, if divergences ignored the input.
      const chance = 1 - (1 - rate) ** 2;
      if (hits < 2 || hits * 2 < this.cycles || hits / this.cycles < 2 * chance) continue;
      const input = this.m.inputs.find((x) => x.name === name);
      const synced = input?.synchronize ?? false;
      hints.push({
        kind: 'hint',
        cause: 'input-timing',
        text: synced
          ? `Divergences coincide with changes of '${name}', which has a synchronizer: a bouncing contact or glitches on that input may reach the logic as more than one change; consider debouncing it.`
          : `Divergences coincide with changes of '${name}', which is declared synchronous (no synchronizer): if it comes from outside this clock domain, part of the logic may sample it before a change and part after; give it a synchronizer (drop 'synced') or check where it comes from.`,
        evidence: `${hits} of ${this.cycles} divergent cycles follow a change of ${name}; it changes in ${(rate * 100).toFixed(1)}% of all cycles`,
      });
    }
    const stuckKeys = new Set<string>();
    for (const [key, t] of this.bits) {
      if (t.count < STUCK_MIN || (t.ones !== 0 && t.ones !== t.count)) continue;
      stuckKeys.add(key);
      const [signal, bit] = splitKey(key);
      const value = t.ones === t.count ? 1 : 0;
      hints.push({
        kind: 'hint',
        cause: 'stuck-bit',
        text: `Bit ${bit} of ${signal} may be stuck at ${value}: check the pin assignment in the constraints file, the wiring of that net on the board, and the probe's connection to it.`,
        evidence: `in all ${t.count} cycles where the model expects ${1 - value} there, the board shows ${value} (cycles ${t.firstCycle} to ${t.lastCycle})`,
      });
    }
    let flips = 0;
    const flipKeys: string[] = [];
    for (const [key, n] of this.isolatedFlips) {
      if (stuckKeys.has(key)) continue;
      flips += n;
      flipKeys.push(key.replace(':', ' bit '));
    }
    if (flips >= FLIPS_MIN) {
      const perMillion = comparedCycles > 0 ? (flips / comparedCycles) * 1e6 : 0;
      hints.push({
        kind: 'hint',
        cause: 'sporadic-flips',
        text: 'Isolated single-bit differences at unrelated places suggest timing: check the timing report for setup violations at this clock frequency, the clock source (jitter, a PLL used before it locks), and supply noise.',
        evidence: `${flips} isolated single-bit divergent cycles (${perMillion.toFixed(1)} per million compared cycles) on ${flipKeys.slice(0, 5).join(', ')}${flipKeys.length > 5 ? ', ...' : ''}`,
      });
    }
    return hints;
  }
}

function splitKey(key: string): [string, string] {
  const at = key.lastIndexOf(':');
  return [key.slice(0, at), key.slice(at + 1)];
}
