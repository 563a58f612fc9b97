// What the comparator reports: one verdict per finding (divergence, gap, decode error, identification,
// hint) and a closing summary. Plain JSON-safe data, so the CLI can print them as text or as JSON lines.
import type { DecodeErrorKind } from '../protocol/decoder';

export type SignalGroup = 'state' | 'register' | 'status' | 'output';

export interface DivergenceVerdict {
  kind: 'divergence';
  /** Design cycle of the frame that shows the difference (0 = first cycle after reset). */
  cycle: number;
  /** Cycles since the last reset the board announced; null when the stream shows no reset. */
  sinceReset: number | null;
  /** Probe field name: `state`, `reg.NAME`, `status.NAME` or `out.NAME`. */
  signal: string;
  group: SignalGroup;
  expected: string;
  actual: string;
  /** Bit patterns as binary strings of the signal's width, most significant bit first. */
  expectedBits: string;
  actualBits: string;
  /** Bit positions (0 = least significant) where the board's pattern differs from the expected one. */
  differingBits: number[];
  /** The board's state in this cycle. */
  state: string;
  /** For state and registers: the step from the previous cycle, as the board took it and as the model expects it. */
  transition: { from: string; expected: string; board: string } | null;
  /** What in the controller or the datapath accounts for the difference. */
  explanation: string;
  /** Inputs whose value changed in the two cycles before this frame. */
  inputsChanged: string[];
  /** Stream byte where the frame began. */
  offset: number;
}

export interface GapVerdict {
  kind: 'gap';
  /** First cycle missing. */
  cycle: number;
  missing: number;
  offset: number;
}

export interface DecodeErrorVerdict {
  kind: 'decode-error';
  error: DecodeErrorKind;
  message: string;
  /** Last cycle received before the damage (-1 when none yet). */
  afterCycle: number;
  offset: number;
}

export interface IdentityVerdict {
  kind: 'identity';
  /** 32-bit fingerprint the board sent, 8 hex digits. */
  fingerprint: string;
  afterReset: boolean;
  /** How it disagrees with the design being compared; null when it agrees. */
  mismatch: string | null;
  offset: number;
}

export type HintCause = 'stale-bitstream' | 'reset' | 'input-timing' | 'stuck-bit' | 'sporadic-flips' | 'link';

export interface HintVerdict {
  kind: 'hint';
  cause: HintCause;
  /** A hypothesis, worded as one. */
  text: string;
  /** The observations it rests on. */
  evidence: string;
}

export interface SummaryVerdict {
  kind: 'summary';
  /** `agree`: frames compared and no divergence; `diverged`; `no-frames`: nothing to compare. */
  outcome: 'agree' | 'diverged' | 'no-frames';
  bytes: number;
  cycleFrames: number;
  idFrames: number;
  /** Frames on which at least one signal was checked against a prediction. */
  comparedFrames: number;
  divergences: number;
  divergentCycles: number;
  gaps: number;
  droppedFrames: number;
  crcErrors: number;
  framingErrors: number;
  idMismatches: number;
  resets: number;
  lastCycle: number;
}

export type Verdict = DivergenceVerdict | GapVerdict | DecodeErrorVerdict | IdentityVerdict | HintVerdict | SummaryVerdict;

/** One-line text form for people. */
export function formatVerdict(v: Verdict): string {
  switch (v.kind) {
    case 'divergence': {
      const step = v.transition ? ` [board ${v.transition.from} -> ${v.transition.board}, model ${v.transition.from} -> ${v.transition.expected}]` : ` [state ${v.state}]`;
      return `cycle ${v.cycle}: ${v.signal} expected ${v.expected}, board ${v.actual}${step}: ${v.explanation}`;
    }
    case 'gap':
      return `cycle ${v.cycle}: ${v.missing} frame${v.missing === 1 ? '' : 's'} lost (stream byte ${v.offset}); comparison resumes at the next complete frame`;
    case 'decode-error':
      return `${v.message}${v.afterCycle >= 0 ? ` (after cycle ${v.afterCycle})` : ''}`;
    case 'identity':
      return v.mismatch
        ? `identification at stream byte ${v.offset}: ${v.mismatch}`
        : `identification at stream byte ${v.offset}: fingerprint ${v.fingerprint}${v.afterReset ? ', board reset' : ''}`;
    case 'hint':
      return `hint (${v.cause}): ${v.text} Evidence: ${v.evidence}`;
    case 'summary':
      return [
        `${v.outcome === 'agree' ? 'AGREE' : v.outcome === 'diverged' ? 'DIVERGED' : 'NO FRAMES'}:`,
        `${v.cycleFrames} cycle frames (${v.comparedFrames} compared), ${v.divergences} divergence${v.divergences === 1 ? '' : 's'} in ${v.divergentCycles} cycle${v.divergentCycles === 1 ? '' : 's'},`,
        `${v.droppedFrames} frames lost in ${v.gaps} gap${v.gaps === 1 ? '' : 's'}, ${v.crcErrors} CRC errors, ${v.framingErrors} framing errors, ${v.idMismatches} identification mismatches, ${v.bytes} bytes`,
      ].join(' ');
  }
}
