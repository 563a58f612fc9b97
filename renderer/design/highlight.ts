// Syntax colouring for the design language, one line at a time: words, numbers, operators and
// comments become classed spans, and diagnostics mark the token they point at with an underline.
import { KEYWORDS } from '../../core/lang/parser';

export type TokenClass = 'kw' | 'type' | 'num' | 'op' | 'comment' | 'name' | 'state' | 'modifier' | 'unit' | 'plain';

export interface Segment {
  text: string;
  cls: TokenClass;
  /** Set when a diagnostic points into this segment. */
  mark?: 'error' | 'warning';
}

const MODIFIERS = new Set(['initial', 'synced', 'reset', 'code']);
const UNITS = new Set(['Hz', 'kHz', 'MHz']);
const TYPE_RE = /^(bit|[us][0-9]+)$/;

/** Splits one line into classed segments covering every character, in order. */
export function highlightLine(line: string): Segment[] {
  const out: Segment[] = [];
  let prevWord = '';
  let i = 0;
  while (i < line.length) {
    const rest = line.slice(i);
    let m: RegExpMatchArray | null;
    if (rest.startsWith('--')) {
      out.push({ text: rest, cls: 'comment' });
      break;
    } else if ((m = rest.match(/^\s+/))) {
      out.push({ text: m[0], cls: 'plain' });
    } else if ((m = rest.match(/^[A-Za-z_][A-Za-z0-9_]*/))) {
      const w = m[0];
      let cls: TokenClass = 'name';
      if (KEYWORDS.has(w)) cls = 'kw';
      else if (MODIFIERS.has(w)) cls = 'modifier';
      else if (TYPE_RE.test(w) && prevWord === ':') cls = 'type';
      else if (UNITS.has(w)) cls = 'unit';
      else if (prevWord === 'state' || prevWord === 'go') cls = 'state';
      out.push({ text: w, cls });
      prevWord = w;
    } else if ((m = rest.match(/^(0[xX][0-9A-Fa-f_]+|0[bB][01_]+|[0-9][0-9_]*(\.[0-9]+)?([us][0-9]+)?)/))) {
      out.push({ text: m[0], cls: 'num' });
      prevWord = m[0];
    } else {
      m = rest.match(/^(<-|<<|>>|<=|>=|==|!=|\+\+|.)/)!;
      out.push({ text: m[0], cls: 'op' });
      prevWord = m[0];
    }
    i += m[0].length;
  }
  return out;
}

export interface LineMark {
  /** 1-based column the diagnostic points at. */
  col: number;
  severity: 'error' | 'warning';
}

/**
 * Marks the segment that starts at or covers each diagnostic's column (errors win over warnings).
 * A column past the end of the line marks a trailing blank, so "missing X at end of line" shows too.
 */
export function markSegments(segments: Segment[], marks: LineMark[]): Segment[] {
  if (marks.length === 0) return segments;
  const out = segments.map((s) => ({ ...s }));
  for (const mark of marks) {
    let pos = 0;
    let hit = -1;
    for (let k = 0; k < out.length; k++) {
      const end = pos + out[k].text.length;
      if (mark.col - 1 >= pos && mark.col - 1 < end) {
        hit = k;
        break;
      }
      pos = end;
    }
    // Whitespace carries no meaning; underline the next visible token instead.
    while (hit >= 0 && out[hit].cls === 'plain' && hit + 1 < out.length) hit++;
    if (hit < 0) {
      out.push({ text: ' ', cls: 'plain', mark: mark.severity });
      continue;
    }
    if (out[hit].mark !== 'error') out[hit].mark = mark.severity;
  }
  return out;
}
