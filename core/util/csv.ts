// CSV reader following RFC 4180: quoted fields, doubled quotes inside quotes, CRLF or LF line ends.
// Returns rows with the line and column of each field, so stimulus errors can point at a cell.

export interface CsvField {
  text: string;
  line: number;
  col: number;
}

export type CsvResult = { ok: true; rows: CsvField[][] } | { ok: false; line: number; col: number; message: string };

export function parseCsv(text: string): CsvResult {
  const rows: CsvField[][] = [];
  let row: CsvField[] = [];
  let i = 0;
  let line = 1;
  let lineStart = 0;
  const n = text.length;
  if (n === 0) return { ok: true, rows };
  for (;;) {
    const col = i - lineStart + 1;
    const fieldLine = line;
    let value = '';
    if (text[i] === '"') {
      i++;
      for (;;) {
        if (i >= n) return { ok: false, line: fieldLine, col, message: 'quoted field is not closed' };
        const c = text[i];
        if (c === '"') {
          if (text[i + 1] === '"') {
            value += '"';
            i += 2;
            continue;
          }
          i++;
          break;
        }
        if (c === '\n') {
          line++;
          lineStart = i + 1;
        }
        value += c;
        i++;
      }
      if (i < n && text[i] !== ',' && text[i] !== '\n' && text[i] !== '\r') {
        return { ok: false, line, col: i - lineStart + 1, message: 'unexpected character after a closing quote' };
      }
    } else {
      const start = i;
      while (i < n && text[i] !== ',' && text[i] !== '\n' && text[i] !== '\r') {
        if (text[i] === '"') return { ok: false, line, col: i - lineStart + 1, message: 'quote inside an unquoted field' };
        i++;
      }
      value = text.slice(start, i);
    }
    row.push({ text: value, line: fieldLine, col });
    if (i >= n) {
      rows.push(row);
      break;
    }
    if (text[i] === ',') {
      i++;
      continue;
    }
    // End of record: CRLF or LF (a lone CR is accepted as well).
    if (text[i] === '\r') i++;
    if (text[i] === '\n') i++;
    rows.push(row);
    row = [];
    line++;
    lineStart = i;
    if (i >= n) break;
  }
  return { ok: true, rows };
}
