// Stimulus for the model: one row of input values per cycle, from a CSV file or a seeded generator.
// Values are unsigned bit patterns in the order of machine.inputs.
import type { Machine } from '../ir/schema';
import { fits, wrap } from '../util/bits';
import { parseCsv } from '../util/csv';
import { diag, type Diagnostic } from '../util/diagnostic';
import { SeededRandom } from '../util/prng';

export type StimulusResult = { ok: true; rows: bigint[][] } | { ok: false; diagnostics: Diagnostic[] };

/** Parses an integer literal as written in stimulus cells: 42, -3, 0x2A, 0b101 (underscores allowed). */
export function parseCellValue(text: string): bigint | null {
  const t = text.trim().replace(/_/g, '');
  if (/^-?[0-9]+$/.test(t)) return BigInt(t);
  if (/^0[xX][0-9a-fA-F]+$/.test(t)) return BigInt(t);
  if (/^0[bB][01]+$/.test(t)) return BigInt(t);
  return null;
}

/**
 * CSV stimulus (RFC 4180): a header naming every input once, then one row per cycle. Negative
 * numbers are allowed for signed inputs; hex and binary give the bit pattern directly.
 */
export function parseStimulusCsv(text: string, machine: Machine): StimulusResult {
  const csv = parseCsv(text.replace(/^\uFEFF/, ''));
  if (!csv.ok) return { ok: false, diagnostics: [diag('error', csv.line, csv.col, csv.message, 'see RFC 4180 for quoting rules')] };
  const rows = csv.rows.filter((r) => !(r.length === 1 && r[0].text.trim() === ''));
  if (rows.length === 0) return { ok: false, diagnostics: [diag('error', 1, 1, 'stimulus is empty', `the first line names the inputs: ${machine.inputs.map((i) => i.name).join(',')}`)] };
  const header = rows[0];
  const diagnostics: Diagnostic[] = [];
  const column = new Map<string, number>();
  header.forEach((h, idx) => {
    const name = h.text.trim();
    if (!machine.inputs.some((i) => i.name === name)) {
      diagnostics.push(diag('error', h.line, h.col, `column '${name}' is not an input of ${machine.name}`, `inputs are: ${machine.inputs.map((i) => i.name).join(', ') || '(none)'}`));
    } else if (column.has(name)) diagnostics.push(diag('error', h.line, h.col, `column '${name}' appears twice`, 'name each input once'));
    else column.set(name, idx);
  });
  for (const input of machine.inputs) {
    if (!column.has(input.name)) diagnostics.push(diag('error', header[0].line, 1, `input '${input.name}' has no column`, `add a column named ${input.name}`));
  }
  if (diagnostics.length) return { ok: false, diagnostics };
  const out: bigint[][] = [];
  for (const r of rows.slice(1)) {
    if (r.length !== header.length) {
      diagnostics.push(diag('error', r[0].line, 1, `row has ${r.length} fields, the header has ${header.length}`, 'every row gives one value per input'));
      if (diagnostics.length > 20) break;
      continue;
    }
    const values: bigint[] = [];
    for (const input of machine.inputs) {
      const cell = r[column.get(input.name)!];
      const v = parseCellValue(cell.text);
      const { width, signed } = input.type;
      if (v === null) {
        diagnostics.push(diag('error', cell.line, cell.col, `'${cell.text}' is not a number (input '${input.name}')`, 'write 12, -3, 0x1F or 0b101'));
      } else if (fits(v, width, signed) || (v >= 0n && fits(v, width, false))) {
        values.push(wrap(v, width));
      } else {
        diagnostics.push(diag('error', cell.line, cell.col, `${v} does not fit input '${input.name}' (${signed ? 's' : 'u'}${width})`, 'check the value or the input type'));
      }
    }
    if (diagnostics.length > 20) break;
    out.push(values);
  }
  if (diagnostics.length) return { ok: false, diagnostics };
  return { ok: true, rows: out };
}

/** `cycles` rows of uniformly random input values from a seeded generator (xoshiro128**). */
export function randomStimulus(machine: Machine, cycles: number, seed: number): bigint[][] {
  const rnd = new SeededRandom(seed);
  const rows: bigint[][] = [];
  for (let c = 0; c < cycles; c++) rows.push(machine.inputs.map((i) => rnd.bits(i.type.width)));
  return rows;
}

/** Writes rows back as CSV with a header, values in decimal by each input's signedness. */
export function formatStimulusCsv(machine: Machine, rows: bigint[][]): string {
  const lines = [machine.inputs.map((i) => i.name).join(',')];
  for (const r of rows) {
    lines.push(
      r
        .map((v, k) => {
          const { width, signed } = machine.inputs[k].type;
          return (signed && v >> BigInt(width - 1) ? v - (1n << BigInt(width)) : v).toString();
        })
        .join(','),
    );
  }
  return lines.join('\n') + '\n';
}
