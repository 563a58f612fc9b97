// Stimulus input: the CSV reader against the examples of RFC 4180 section 2, stimulus cells with
// their error positions, and the seeded generator's reproducibility.
import { describe, expect, it } from 'vitest';
import { parseCsv } from '../core/util/csv';
import { formatStimulusCsv, parseStimulusCsv, randomStimulus } from '../core/model/stimulus';
import { checkText, loadFixture } from './support/load';

const texts = (r: ReturnType<typeof parseCsv>) => (r.ok ? r.rows.map((row) => row.map((f) => f.text)) : r);

describe('CSV reader (RFC 4180, section 2)', () => {
  it('rule 1: records separated by CRLF; rule 2: the last record may lack a line break', () => {
    expect(texts(parseCsv('aaa,bbb,ccc\r\nzzz,yyy,xxx\r\n'))).toEqual([['aaa', 'bbb', 'ccc'], ['zzz', 'yyy', 'xxx']]);
    expect(texts(parseCsv('aaa,bbb,ccc\r\nzzz,yyy,xxx'))).toEqual([['aaa', 'bbb', 'ccc'], ['zzz', 'yyy', 'xxx']]);
  });
  it('rule 5: fields may be enclosed in double quotes', () => {
    expect(texts(parseCsv('"aaa","bbb","ccc"\r\nzzz,yyy,xxx'))).toEqual([['aaa', 'bbb', 'ccc'], ['zzz', 'yyy', 'xxx']]);
  });
  it('rule 6: quoted fields may hold line breaks, commas and quotes', () => {
    expect(texts(parseCsv('"aaa","b\r\nbb","ccc"\r\nzzz,yyy,xxx'))).toEqual([['aaa', 'b\r\nbb', 'ccc'], ['zzz', 'yyy', 'xxx']]);
  });
  it('rule 7: a quote inside a quoted field is doubled', () => {
    expect(texts(parseCsv('"aaa","b""bb","ccc"'))).toEqual([['aaa', 'b"bb', 'ccc']]);
  });
  it('LF-only line ends (common practice on Unix) and empty fields', () => {
    expect(texts(parseCsv('a,,c\n,,\n'))).toEqual([['a', '', 'c'], ['', '', '']]);
  });
  it('an unclosed quote is reported with its position', () => {
    expect(parseCsv('a,b\n1,"2\n')).toEqual({ ok: false, line: 2, col: 3, message: 'quoted field is not closed' });
  });
});

describe('stimulus files', () => {
  const { machine } = loadFixture('trim_servo');

  it('accepts decimal, negative, hex and binary cells, columns in any order', () => {
    const r = parseStimulusCsv('measured,sample,setpoint\n-1,1,0x7FF\n0b101,0,-2048\n', machine);
    expect(r).toEqual({ ok: true, rows: [[1n, 0x7ffn, 0xfffn], [0n, 0x800n, 5n]] });
  });

  it('names the cell of a bad value, an out-of-range value and a missing column', () => {
    const bad = parseStimulusCsv('sample,setpoint,measured\n1,abc,0\n', machine);
    expect(bad.ok || bad.diagnostics[0]).toMatchObject({ line: 2, col: 3, message: "'abc' is not a number (input 'setpoint')" });
    const range = parseStimulusCsv('sample,setpoint,measured\n1,0,4096\n', machine);
    expect(range.ok || range.diagnostics[0]).toMatchObject({ line: 2, col: 5, message: "4096 does not fit input 'measured' (s12)" });
    const missing = parseStimulusCsv('sample,setpoint\n1,0\n', machine);
    expect(missing.ok || missing.diagnostics[0].message).toBe("input 'measured' has no column");
    const extra = parseStimulusCsv('sample,setpoint,measured,bogus\n', machine);
    expect(extra.ok || extra.diagnostics[0].message).toBe("column 'bogus' is not an input of trim_servo");
  });

  it('round-trips through formatStimulusCsv', () => {
    const rows = randomStimulus(machine, 50, 3);
    expect(parseStimulusCsv(formatStimulusCsv(machine, rows), machine)).toEqual({ ok: true, rows });
  });

  it('random stimulus is reproducible by seed and differs between seeds', () => {
    expect(randomStimulus(machine, 20, 42)).toEqual(randomStimulus(machine, 20, 42));
    expect(randomStimulus(machine, 20, 42)).not.toEqual(randomStimulus(machine, 20, 43));
  });

  it('a design with no inputs simulates from an empty stimulus', () => {
    const m = checkText('machine free\nreg n : u3 reset 0\nstate A\n  n <- n + 1\n  go B\nstate B\n  go A\n').machine!;
    expect(parseStimulusCsv('', m).ok).toBe(false);
    expect(randomStimulus(m, 4, 1)).toEqual([[], [], [], []]);
  });
});
