// What replay and monitor share: synthesizing the design for the bitstream's state encoding, deriving the
// probe layout, and printing verdicts as text lines or JSON lines.
import type { Machine } from '../../core/ir/schema';
import { probeLayout, type ProbeLayout } from '../../core/probe/layout';
import { synthesize } from '../../core/synth/index';
import type { EncodingKind, Synthesis } from '../../core/synth/schema';
import { formatVerdict, type Verdict } from '../../core/compare/verdict';
import type { CliIO } from '../cli-io';

export const ENCODINGS: readonly EncodingKind[] = ['binary', 'gray', 'onehot', 'custom'];

export function isEncoding(text: string): text is EncodingKind {
  return (ENCODINGS as readonly string[]).includes(text);
}

/** Synthesis and probe layout for the encoding the bitstream was built with; prints and returns null on failure. */
export function prepareDesign(m: Machine, encoding: EncodingKind, io: CliIO, who: string): { syn: Synthesis; layout: ProbeLayout } | null {
  const syn = synthesize(m, { encoding });
  if (!syn.ok) {
    io.err(`${who}: synthesis of ${m.name} with the ${encoding} encoding failed: ${syn.error}\n`);
    return null;
  }
  const layout = probeLayout(m, syn.result);
  if (!layout.ok) {
    io.err(`${who}: ${layout.error}\n`);
    return null;
  }
  return { syn: syn.result, layout: layout.layout };
}

/** JSON with bigints as decimal strings. */
export function jsonLine(value: unknown): string {
  return JSON.stringify(value, (_k, v) => (typeof v === 'bigint' ? v.toString() : v)) + '\n';
}

/**
 * Prints verdicts. Text mode shows at most `limit` detail lines (divergences, gaps, decode errors) and then
 * counts the rest, so a noisy run stays readable; hints and the summary always print. JSON mode prints all.
 */
export class VerdictPrinter {
  private shown = 0;
  private hidden = 0;

  constructor(
    private readonly io: CliIO,
    private readonly json: boolean,
    private readonly limit: number,
    /** Called before each text line (e.g. to clear a live status line). */
    private readonly beforeLine: () => void = () => {},
  ) {}

  verdict(v: Verdict): void {
    if (this.json) return this.io.out(jsonLine(v));
    const detail = v.kind === 'divergence' || v.kind === 'gap' || v.kind === 'decode-error';
    if (detail && this.shown >= this.limit) {
      this.hidden++;
      return;
    }
    if (detail) this.shown++;
    if (v.kind === 'summary' && this.hidden > 0) {
      this.beforeLine();
      this.io.out(`(${this.hidden} more divergence, gap and decode-error lines not shown; --json lists them all)\n`);
    }
    this.beforeLine();
    this.io.out(formatVerdict(v) + '\n');
  }

  /** Something about the capture or the link, not a verdict on the design. */
  event(kind: 'note' | 'capture-problem' | 'link', fields: Record<string, unknown>, text: string): void {
    if (this.json) return this.io.out(jsonLine({ kind, ...fields }));
    this.beforeLine();
    this.io.err(text + '\n');
  }
}
