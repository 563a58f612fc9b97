// Lexer for the Twinstep design language: one line at a time, since every statement fits a line.
// Unknown characters become diagnostics and are skipped, so the parser always gets a token list.
import { diag, type Diagnostic } from '../util/diagnostic';

export type TokenKind = 'ident' | 'number' | 'decimal' | 'op' | 'eol';

export interface Token {
  kind: TokenKind;
  text: string;
  line: number;
  col: number;
  /** For `number`: the integer value; for `decimal` see `text`. */
  value?: bigint;
  /** For `number` with a type suffix such as `12u8` or `-3s4`. */
  width?: number;
  signed?: boolean;
}

/** Operators, longest first so that `<-` wins over `<` and `<<` over `<`. */
const OPERATORS = ['<-', '<<', '>>', '<=', '>=', '==', '!=', '++', '<', '>', '=', '+', '-', '&', '|', '^', '~', '(', ')', '[', ']', ':', ',', ';'];

const MAX_LINE = 10_000;

export function lexLine(text: string, line: number, out: Diagnostic[]): Token[] {
  const tokens: Token[] = [];
  if (text.length > MAX_LINE) {
    out.push(diag('error', line, 1, `line is ${text.length} characters long`, `keep lines under ${MAX_LINE} characters`));
    return [{ kind: 'eol', text: '', line, col: 1 }];
  }
  let i = 0;
  while (i < text.length) {
    const c = text[i];
    const col = i + 1;
    if (c === ' ' || c === '\t' || c === '\r') {
      i++;
      continue;
    }
    if (c === '-' && text[i + 1] === '-') break; // comment to end of line
    if (/[A-Za-z_]/.test(c)) {
      let j = i + 1;
      while (j < text.length && /[A-Za-z0-9_]/.test(text[j])) j++;
      tokens.push({ kind: 'ident', text: text.slice(i, j), line, col });
      i = j;
      continue;
    }
    if (/[0-9]/.test(c)) {
      const tok = lexNumber(text, i, line, out);
      tokens.push(tok.token);
      i = tok.end;
      continue;
    }
    const op = OPERATORS.find((o) => text.startsWith(o, i));
    if (op) {
      tokens.push({ kind: 'op', text: op, line, col });
      i += op.length;
      continue;
    }
    const shown = c.charCodeAt(0) < 32 || c.charCodeAt(0) > 126 ? `U+${c.charCodeAt(0).toString(16).toUpperCase().padStart(4, '0')}` : `'${c}'`;
    out.push(diag('error', line, col, `unexpected character ${shown}`, 'remove it; comments start with --'));
    i++;
  }
  tokens.push({ kind: 'eol', text: '', line, col: text.length + 1 });
  return tokens;
}

function lexNumber(text: string, start: number, line: number, out: Diagnostic[]): { token: Token; end: number } {
  const col = start + 1;
  let i = start;
  let digits: string;
  let radix = 10;
  const lower = text.slice(start, start + 2).toLowerCase();
  if (lower === '0x' || lower === '0b') {
    radix = lower === '0x' ? 16 : 2;
    i += 2;
    const re = radix === 16 ? /[0-9A-Fa-f_]/ : /[01_]/;
    let j = i;
    while (j < text.length && re.test(text[j])) j++;
    digits = text.slice(i, j).replace(/_/g, '');
    i = j;
  } else {
    let j = i;
    while (j < text.length && /[0-9_]/.test(text[j])) j++;
    if (text[j] === '.' && /[0-9]/.test(text[j + 1] ?? '')) {
      let k = j + 1;
      while (k < text.length && /[0-9]/.test(text[k])) k++;
      return { token: { kind: 'decimal', text: text.slice(start, k), line, col }, end: k };
    }
    digits = text.slice(i, j).replace(/_/g, '');
    i = j;
  }
  const token: Token = { kind: 'number', text: '', line, col, value: 0n };
  if (digits.length === 0) {
    out.push(diag('error', line, col, `number '${text.slice(start, i)}' has no digits`, radix === 16 ? 'write hex as 0x1F' : 'write binary as 0b101'));
  } else if (digits.length > 80) {
    out.push(diag('error', line, col, 'number literal is far too long', 'literals hold at most 64 bits'));
  } else {
    token.value = radix === 10 ? BigInt(digits) : BigInt((radix === 16 ? '0x' : '0b') + digits);
  }
  // Optional type suffix: u<width> or s<width>, written straight after the digits.
  const suffix = /^([us])([0-9]+)/.exec(text.slice(i));
  if (suffix) {
    token.signed = suffix[1] === 's';
    token.width = Number(suffix[2].slice(0, 6));
    i += suffix[0].length;
  }
  if (i < text.length && /[A-Za-z0-9_]/.test(text[i])) {
    let j = i;
    while (j < text.length && /[A-Za-z0-9_]/.test(text[j])) j++;
    out.push(diag('error', line, i + 1, `unexpected '${text.slice(i, j)}' after number`, 'a width suffix looks like 12u8 or 5s4'));
    i = j;
  }
  token.text = text.slice(start, i);
  return { token, end: i };
}
