// Value change dump (IEEE Std 1364-2005, clause 18) of a lockstep run: the board's signals, the model's
// expectation of each as a separate signal, and a divergence marker. Streaming: text out per frame.
import type { ProbeLayout } from '../probe/layout';
import { TOOL_VERSION } from '../util/version';
import type { FrameObservation } from '../compare/comparator';

interface VcdVar {
  id: string;
  width: number;
  /** Last value written ('' before the first). */
  last: string;
}

/** Identifier codes: printable ASCII 33..126 (the standard's identifier_code), shortest first. */
export function vcdIdentifier(n: number): string {
  let s = '';
  let k = n;
  do {
    s += String.fromCharCode(33 + (k % 94));
    k = Math.floor(k / 94) - 1;
  } while (k >= 0);
  return s;
}

/** Value text of a change: scalar `0!`/`x!`, vector `b101 !`/`bx !` (leading zeros dropped: a vector is left-extended with 0). */
function change(v: VcdVar, value: bigint | null): string {
  if (v.width === 1) return `${value === null ? 'x' : value === 0n ? '0' : '1'}${v.id}`;
  return `b${value === null ? 'x' : value.toString(2)} ${v.id}`;
}

export interface VcdOptions {
  layout: ProbeLayout;
  design: string;
  /** Board clock, for real time stamps; without it one time unit is one cycle. */
  clockHz: number | null;
  /** Written into the header's $date section. */
  date: string;
}

/**
 * Writes the header on construction (`header`), then one block of changes per frame (`frame`). Times are
 * cycle × period; a reset restarts the board's cycle count, so the time base moves on instead of going
 * back (VCD times must not decrease) and the `cycle` variable shows the board's own count.
 */
export class VcdWriter {
  readonly header: string;
  private readonly board: VcdVar[];
  private readonly model: (VcdVar | null)[];
  private readonly marker: VcdVar;
  private readonly cycleVar: VcdVar;
  private readonly period: number;
  private base = 0;
  private lastIndex = -1;

  constructor(opts: VcdOptions) {
    let n = 0;
    const make = (width: number): VcdVar => ({ id: vcdIdentifier(n++), width, last: '' });
    const fields = opts.layout.fields;
    this.board = fields.map((f) => make(f.width));
    this.model = fields.map((f) => (f.kind === 'input' ? null : make(f.width)));
    this.marker = make(1);
    this.cycleVar = make(32);
    const ps = opts.clockHz ? Math.round(1e12 / opts.clockHz) : 0;
    this.period = ps > 0 ? ps : 1;
    const ident = (name: string) => name.replace(/[^A-Za-z0-9_]/g, '_');
    const L: string[] = [];
    L.push(`$date ${opts.date} $end`);
    L.push(`$version Twinstep ${TOOL_VERSION} lockstep capture $end`);
    L.push(`$comment design ${opts.design}; board.* are the values the board sent, model.* what the model expected from the board's previous cycle; divergence is 1 in cycles where they differ $end`);
    L.push(ps > 0 ? '$timescale 1 ps $end' : '$timescale 1 ns $end');
    if (ps === 0) L.push('$comment no clock frequency known: one time unit per cycle $end');
    L.push(`$scope module ${ident(opts.design)} $end`);
    L.push(`$var wire 1 ${this.marker.id} divergence $end`);
    L.push(`$var integer 32 ${this.cycleVar.id} cycle $end`);
    L.push('$scope module board $end');
    fields.forEach((f, i) => L.push(`$var wire ${f.width} ${this.board[i].id} ${ident(f.name)} $end`));
    L.push('$upscope $end');
    L.push('$scope module model $end');
    fields.forEach((f, i) => {
      const v = this.model[i];
      if (v) L.push(`$var wire ${f.width} ${v.id} ${ident(f.name)} $end`);
    });
    L.push('$upscope $end');
    L.push('$upscope $end');
    L.push('$enddefinitions $end');
    this.header = L.join('\n') + '\n';
  }

  /** Changes for one frame (empty when nothing changed). */
  frame(f: FrameObservation): string {
    if (f.cycle + this.base <= this.lastIndex) this.base = this.lastIndex + 1 - f.cycle;
    const index = f.cycle + this.base;
    this.lastIndex = index;
    const out: string[] = [];
    const put = (v: VcdVar, value: bigint | null) => {
      const text = change(v, value);
      if (text !== v.last) {
        out.push(text);
        v.last = text;
      }
    };
    const first = this.marker.last === '';
    put(this.cycleVar, BigInt(f.cycle >>> 0));
    put(this.marker, f.diverged.length > 0 ? 1n : 0n);
    f.board.forEach((v, i) => put(this.board[i], v));
    f.expected.forEach((v, i) => {
      const mv = this.model[i];
      if (mv) put(mv, v);
    });
    if (out.length === 0) return '';
    const time = `#${index * this.period}\n`;
    return first ? `${time}$dumpvars\n${out.join('\n')}\n$end\n` : `${time}${out.join('\n')}\n`;
  }

  /** Closing time stamp one cycle after the last frame, so the last values have a visible duration. */
  finish(): string {
    if (this.lastIndex < 0) return '';
    return `#${(this.lastIndex + 1) * this.period}\n`;
  }
}
