// The checker as a specification: each rule of docs/language.md with a small design that breaks it,
// the diagnostic's position and wording, and robustness against arbitrary and mutated input.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { checkDesign } from '../core/check/checker';
import { formatDiagnostic } from '../core/util/diagnostic';
import { loadFixture, fixtureNames } from './support/load';

const HEAD = `machine t
in  a : bit
in  b : u8
in  c : s8
out y : bit = 0
out z : u8 = 0
reg r : u8 reset 0
reg q : s16 reset 0
`;

function errors(body: string) {
  return checkDesign(HEAD + body, 't.tsm').diagnostics.filter((d) => d.severity === 'error');
}
function warnings(body: string) {
  return checkDesign(HEAD + body, 't.tsm').diagnostics.filter((d) => d.severity === 'warning');
}
const L = (n: number) => n + 8; // line numbers in HEAD + body

describe('checker diagnostics', () => {
  it('a clean design has no diagnostics and yields a machine', () => {
    const r = checkDesign(HEAD + 'state S\n  r <- r + b\n  on a go T\nstate T\n  go S\n', 't.tsm');
    expect(r.diagnostics).toEqual([]);
    expect(r.machine?.states[0].transfers[0].register).toBe('r');
  });

  it('formats as FILE:LINE:COL: severity: message plus a hint line', () => {
    const [d] = errors('state S\n  r <- nope\n');
    expect(formatDiagnostic('t.tsm', d)).toBe(`t.tsm:${L(2)}:8: error: undeclared name 'nope'\n    hint: declare it with in, reg or const`);
  });

  it('syntax error says what was expected and where', () => {
    const [d] = errors('state S\n  on a goo S\n');
    expect(d.line).toBe(L(2));
    expect(d.message).toMatch(/expected 'go' but found 'goo'/);
  });

  it('undeclared name with a suggestion', () => {
    const [d] = errors('state S\n  r <- rr + 1\n');
    expect(d.message).toBe("undeclared name 'rr'");
    expect(d.hint).toBe("did you mean 'r'?");
  });

  it('duplicate declarations and duplicate states', () => {
    expect(errors('reg r : u4\nstate S\n')[0].message).toMatch(/'r' is already declared \(line 7\)/);
    expect(errors('state S\nstate S\n')[0].message).toMatch(/state 'S' is declared twice/);
  });

  it('assignment to an input, to a constant, outputs with <- and registers with =', () => {
    expect(errors('state S\n  a <- 1\n')[0].message).toMatch(/'a' is an input and cannot be assigned/);
    expect(errors('const K = 3\nstate S\n  K <- 1\n')[0].message).toMatch(/constant and cannot be assigned/);
    expect(errors('state S\n  y <- 1\n')[0].message).toMatch(/outputs take '=' not '<-'/);
    expect(errors('state S\n  r = 1\n')[0].message).toMatch(/'r' is a register, not an output/);
  });

  it('width rules: narrowing is an error unless sliced; widening is free', () => {
    const [d] = errors('reg w : u16\nstate S\n  r <- w\n');
    expect(d.message).toMatch(/u16 value does not fit register 'r' \(u8\): it would lose 8 high bits/);
    expect(d.hint).toMatch(/\[7:0\]/);
    expect(errors('reg w : u16\nstate S\n  r <- w[7:0]\n  w <- r\n')).toEqual([]);
  });

  it('signedness rules: mixing needs a conversion; signed into unsigned needs unsigned()', () => {
    expect(errors('state S\n  q <- c + b\n')[0].message).toMatch(/'\+' mixes s8 and u8/);
    expect(errors('state S\n  r <- c\n')[0].message).toMatch(/signed value assigned to unsigned register 'r'/);
    expect(errors('state S\n  r <- unsigned(c)\n  q <- c + signed(grow(b, 9))\n')).toEqual([]);
    expect(errors('state S\n  on c < b go S\n')[0].message).toMatch(/comparison of s8 with u8/);
  });

  it('literals must fit the width they meet', () => {
    expect(errors('state S\n  r <- 256\n')[0].message).toMatch(/256 does not fit u8/);
    expect(errors('state S\n  on b == 300 go S\n')[0].message).toMatch(/300 does not fit u8/);
    expect(errors('state S\n  r <- -1\n')[0].hint).toMatch(/negative/);
    expect(errors('state S\n  q <- -32768\n')).toEqual([]);
    expect(errors('state S\n  q <- -32769\n')[0].message).toMatch(/does not fit s16/);
  });

  it('two transfers to one register on one path, and an output driven twice', () => {
    expect(errors('state S\n  r <- 1\n  r <- 2\n')[0].message).toMatch(/second transfer to 'r' in state 'S'/);
    const [d] = errors('state S\n  r <- 1\n  on a go S with r <- 2\n');
    expect(d.message).toMatch(/second transfer to 'r' on one path \(the state's own is on line 10\)/);
    expect(errors('state S\n  y = 1\n  on a go S with y = 0\n')[0].message).toMatch(/output 'y' driven twice on one path/);
    expect(errors('state S\n  y = 1\n  y = 0\n')[0].message).toMatch(/output 'y' driven twice in state 'S'/);
  });

  it('unreachable states and states with no way out are warnings', () => {
    const w = warnings('state A\n  go A\nstate B\n  go A\n');
    expect(w.map((d) => d.message)).toEqual(["state 'A' has no way out", "state 'B' cannot be reached from the initial state 'A'"]);
  });

  it('a transition after an always-true one is reported as never firing', () => {
    const w = warnings('state A\n  go B\n  on a go A\nstate B\n  on a or not a go A\n  on b == 0 go B\n');
    expect(w.map((d) => [d.line, d.message])).toEqual([
      [L(3), 'this transition never fires: the one on line 10 always fires first'],
      [L(6), 'this transition never fires: the one on line 13 always fires first'],
    ]);
  });

  it('no machine line, no states, two initial states', () => {
    expect(checkDesign('state S\n', 'x').diagnostics[0].message).toMatch(/no 'machine' line/);
    expect(checkDesign('machine m\n', 'x').diagnostics[0].message).toMatch(/no states/);
    expect(errors('state A initial\nstate B initial\n')[0].message).toMatch(/second initial state 'B'/);
  });

  it('conditions must be one bit wide; outputs cannot be read; states are not values', () => {
    expect(errors('state S\n  on b go S\n')[0].message).toBe('condition is 8 bits wide');
    expect(errors('state S\n  r <- z\n')[0].message).toMatch(/output 'z' cannot be read/);
    expect(errors('state S\n  r <- S\n')[0].message).toMatch(/'S' is a state, not a value/);
  });

  it('reserved Verilog words cannot name signals', () => {
    expect(errors('reg wire : u4\nstate S\n')[0].message).toMatch(/'wire' is a reserved word of Verilog/);
  });

  it('custom state codes: unique and complete', () => {
    expect(errors('state A code 1\nstate B code 1\n  go A\n')[0].message).toMatch(/state code 1 is already used by 'A'/);
    expect(errors('state A code 1\nstate B\n  go A\n')[0].message).toMatch(/state 'B' has no code/);
  });

  it('all demo designs are clean (no errors, no warnings)', () => {
    for (const n of fixtureNames()) {
      const { text } = loadFixture(n);
      expect(checkDesign(text, n).diagnostics, n).toEqual([]);
    }
  });
});

describe('checker robustness (fast-check)', () => {
  const check = (text: string) => {
    const r = checkDesign(text, 'fuzz.tsm');
    expect(Array.isArray(r.diagnostics)).toBe(true);
    for (const d of r.diagnostics) {
      expect(d.line).toBeGreaterThanOrEqual(1);
      expect(d.col).toBeGreaterThanOrEqual(1);
      expect(d.message.length).toBeGreaterThan(0);
    }
    if (r.machine === null) expect(r.diagnostics.some((d) => d.severity === 'error')).toBe(true);
  };

  it('random strings never throw', () => {
    fc.assert(fc.property(fc.string({ maxLength: 400 }), check), { numRuns: 500 });
  });

  it('random bytes decoded as text never throw', () => {
    fc.assert(fc.property(fc.uint8Array({ maxLength: 600 }), (bytes) => check(new TextDecoder().decode(bytes))), { numRuns: 300 });
  });

  it('random mutations of the demo designs never throw', () => {
    const texts = fixtureNames().map((n) => loadFixture(n).text);
    const tokens = ['<-', '=', 'on', 'go', 'with', ';', '(', ')', '[', ']', ':', '++', '>>', '<<', '-', '~', 'not', 'and', '0u4', '0xFFFF_FFFF_FFFF_FFFF_F', '64', 's64', 'state', 'reg', '\n', ' ', 'x'];
    fc.assert(
      fc.property(fc.nat(texts.length - 1), fc.array(fc.tuple(fc.nat(), fc.nat(6), fc.nat(tokens.length - 1)), { minLength: 1, maxLength: 8 }), (which, edits) => {
        let t = texts[which];
        for (const [at, len, tok] of edits) {
          const p = at % (t.length + 1);
          t = t.slice(0, p) + tokens[tok] + t.slice(p + len);
        }
        check(t);
      }),
      { numRuns: 400 },
    );
  });

  it('deep nesting and very long lines end in a diagnostic, not a stack overflow or a hang', () => {
    const deep = HEAD + 'state S\n  r <- ' + '('.repeat(50_000) + '1' + ')'.repeat(50_000) + '\n';
    expect(checkDesign(deep, 'x').diagnostics.find((d) => d.severity === 'error')?.message).toMatch(/characters long|nested too deeply/);
    const nest = HEAD + 'state S\n  r <- ' + '('.repeat(500) + '1' + ')'.repeat(500) + '\n';
    expect(checkDesign(nest, 'x').diagnostics.find((d) => d.severity === 'error')?.message).toMatch(/nested too deeply/);
    const minus = HEAD + 'state S\n  r <- ' + '- ~'.repeat(2000) + 'r\n';
    expect(checkDesign(minus, 'x').diagnostics.find((d) => d.severity === 'error')?.message).toMatch(/nested too deeply/);
  });
});
