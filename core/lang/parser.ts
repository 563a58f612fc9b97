// Recursive-descent parser for the design language, one statement per line.
// A syntax error costs only its own line: the parser reports it and carries on with the next.
import { diag, type Diagnostic } from '../util/diagnostic';
import type { AstBinaryOp, AstDesign, AstExpr, AstOutputAssign, AstState, AstTransfer, AstTransition, AstType, Pos } from './ast';
import { lexLine, type Token } from './lexer';

/** Words that cannot name a signal, a constant or a state. */
export const KEYWORDS = new Set(['machine', 'clock', 'const', 'in', 'out', 'reg', 'state', 'on', 'go', 'with', 'and', 'or', 'not']);

const MAX_DEPTH = 200;
const MAX_WIDTH = 64;

class SyntaxError_ {
  constructor(readonly diagnostic: Diagnostic) {}
}

export interface ParseResult {
  ast: AstDesign;
  diagnostics: Diagnostic[];
}

export function parseDesign(text: string): ParseResult {
  const diagnostics: Diagnostic[] = [];
  const ast: AstDesign = { machine: null, clock: null, constants: [], inputs: [], outputs: [], registers: [], states: [] };
  const lines = text.split('\n');
  let current: AstState | null = null;
  for (let n = 0; n < lines.length; n++) {
    const tokens = lexLine(lines[n], n + 1, diagnostics);
    if (tokens.length === 1) continue;
    const p = new LineParser(tokens);
    try {
      const result = p.statement(ast, current);
      if (result) current = result;
    } catch (e) {
      if (e instanceof SyntaxError_) diagnostics.push(e.diagnostic);
      else throw e;
    }
  }
  return { ast, diagnostics };
}

class LineParser {
  private i = 0;
  private depth = 0;

  constructor(private readonly tokens: Token[]) {}

  private peek(offset = 0): Token {
    return this.tokens[Math.min(this.i + offset, this.tokens.length - 1)];
  }

  private next(): Token {
    const t = this.peek();
    if (t.kind !== 'eol') this.i++;
    return t;
  }

  private isOp(text: string, offset = 0): boolean {
    const t = this.peek(offset);
    return t.kind === 'op' && t.text === text;
  }

  private isWord(text: string, offset = 0): boolean {
    const t = this.peek(offset);
    return t.kind === 'ident' && t.text === text;
  }

  private fail(t: Token, message: string, hint: string): never {
    throw new SyntaxError_(diag('error', t.line, t.col, message, hint));
  }

  private describe(t: Token): string {
    return t.kind === 'eol' ? 'end of line' : `'${t.text}'`;
  }

  private expectOp(text: string, hint: string): Token {
    const t = this.peek();
    if (!this.isOp(text)) this.fail(t, `expected '${text}' but found ${this.describe(t)}`, hint);
    return this.next();
  }

  private expectWord(text: string, hint: string): Token {
    const t = this.peek();
    if (!this.isWord(text)) this.fail(t, `expected '${text}' but found ${this.describe(t)}`, hint);
    return this.next();
  }

  private expectName(what: string, hint: string): Token {
    const t = this.peek();
    if (t.kind !== 'ident') this.fail(t, `expected ${what} but found ${this.describe(t)}`, hint);
    if (KEYWORDS.has(t.text)) this.fail(t, `'${t.text}' is a keyword and cannot be used as ${what}`, 'choose another name');
    return this.next();
  }

  private expectEnd(hint: string): void {
    const t = this.peek();
    if (t.kind !== 'eol') this.fail(t, `unexpected ${this.describe(t)} at end of statement`, hint);
  }

  private pos(t: Token): Pos {
    return { line: t.line, col: t.col };
  }

  /** Parses one line; returns the state it opens, if it is a `state` line. */
  statement(ast: AstDesign, current: AstState | null): AstState | null {
    const first = this.peek();
    if (first.kind === 'ident') {
      switch (first.text) {
        case 'machine':
          this.machine(ast);
          return null;
        case 'clock':
          this.clock(ast);
          return null;
        case 'const':
          this.constant(ast);
          return null;
        case 'in':
          this.input(ast);
          return null;
        case 'out':
          this.output(ast);
          return null;
        case 'reg':
          this.register(ast);
          return null;
        case 'state':
          return this.state(ast);
        case 'on':
        case 'go': {
          const tr = this.transition();
          if (!current) this.fail(first, 'transition outside any state', "put it below a 'state NAME' line");
          current.transitions.push(tr);
          return null;
        }
        default:
          break;
      }
      if (this.isOp('<-', 1) || this.isOp('=', 1)) {
        const action = this.action();
        this.expectEnd('one statement per line');
        if (!current) this.fail(first, `'${first.text}' is assigned outside any state`, "put it below a 'state NAME' line");
        if ('isTransfer' in action) current.transfers.push(action.item);
        else current.outputs.push(action.item);
        return null;
      }
    }
    this.fail(
      first,
      `expected a statement but found ${this.describe(first)}`,
      "statements are: machine, clock, const, in, out, reg, state, 'reg <- value', 'out = value', 'on COND go STATE', 'go STATE'",
    );
  }

  private machine(ast: AstDesign): void {
    const kw = this.next();
    const name = this.expectName('a machine name', 'write: machine my_machine');
    this.expectEnd('write: machine my_machine');
    if (ast.machine) this.fail(kw, `second 'machine' line (the first is on line ${ast.machine.pos.line})`, 'a file describes one machine');
    ast.machine = { name: name.text, pos: this.pos(name) };
  }

  private clock(ast: AstDesign): void {
    const kw = this.next();
    const num = this.next();
    if (num.kind !== 'number' && num.kind !== 'decimal') this.fail(num, `expected a frequency but found ${this.describe(num)}`, 'write: clock 25 MHz');
    const unit = this.next();
    const scale: Record<string, number> = { Hz: 1, kHz: 1e3, MHz: 1e6, GHz: 1e9 };
    if (unit.kind !== 'ident' || !(unit.text in scale)) this.fail(unit, `expected a unit (Hz, kHz, MHz) but found ${this.describe(unit)}`, 'write: clock 25 MHz');
    this.expectEnd('write: clock 25 MHz');
    const hz = Number(num.kind === 'number' ? num.value : num.text) * scale[unit.text];
    if (!(hz > 0) || !Number.isFinite(hz)) this.fail(num, 'clock frequency must be positive', 'write: clock 25 MHz');
    if (ast.clock) this.fail(kw, `second 'clock' line (the first is on line ${ast.clock.pos.line})`, 'state the board clock once');
    ast.clock = { hz, pos: this.pos(kw) };
  }

  private type(): AstType {
    const t = this.next();
    const fix = 'types are bit, uN or sN with N from 1 to 64, e.g. u12 or s8';
    if (t.kind !== 'ident') this.fail(t, `expected a type but found ${this.describe(t)}`, fix);
    if (t.text === 'bit') return { width: 1, signed: false, pos: this.pos(t) };
    const m = /^([us])([0-9]+)$/.exec(t.text);
    if (!m) this.fail(t, `unknown type '${t.text}'`, fix);
    const width = Number(m[2]);
    if (width < 1 || width > MAX_WIDTH) this.fail(t, `width ${m[2]} is out of range`, fix);
    return { width, signed: m[1] === 's', pos: this.pos(t) };
  }

  private constant(ast: AstDesign): void {
    this.next();
    const name = this.expectName('a constant name', 'write: const LIMIT = 9');
    let type: AstType | null = null;
    if (this.isOp(':')) {
      this.next();
      type = this.type();
    }
    this.expectOp('=', 'write: const LIMIT = 9');
    const value = this.expr();
    this.expectEnd('write: const LIMIT = 9');
    ast.constants.push({ name: name.text, type, value, pos: this.pos(name) });
  }

  private input(ast: AstDesign): void {
    this.next();
    const name = this.expectName('an input name', 'write: in start : bit');
    this.expectOp(':', 'write: in start : bit');
    const type = this.type();
    let synced = false;
    if (this.isWord('synced')) {
      this.next();
      synced = true;
    }
    this.expectEnd("after the type only 'synced' may follow (input already synchronous to the clock)");
    ast.inputs.push({ name: name.text, type, synced, pos: this.pos(name) });
  }

  private output(ast: AstDesign): void {
    this.next();
    const name = this.expectName('an output name', 'write: out busy : bit = 0');
    this.expectOp(':', 'write: out busy : bit = 0');
    const type = this.type();
    let defaultValue: AstExpr | null = null;
    if (this.isOp('=')) {
      this.next();
      defaultValue = this.expr();
    }
    this.expectEnd('write: out busy : bit = 0');
    ast.outputs.push({ name: name.text, type, defaultValue, pos: this.pos(name) });
  }

  private register(ast: AstDesign): void {
    this.next();
    const name = this.expectName('a register name', 'write: reg count : u8 reset 0');
    this.expectOp(':', 'write: reg count : u8 reset 0');
    const type = this.type();
    let reset: AstExpr | null = null;
    if (this.isWord('reset')) {
      this.next();
      reset = this.expr();
    }
    this.expectEnd('write: reg count : u8 reset 0');
    ast.registers.push({ name: name.text, type, reset, pos: this.pos(name) });
  }

  private state(ast: AstDesign): AstState {
    this.next();
    const name = this.expectName('a state name', 'write: state Idle');
    const st: AstState = { name: name.text, initial: false, code: null, transfers: [], outputs: [], transitions: [], pos: this.pos(name) };
    for (;;) {
      if (this.isWord('initial')) {
        this.next();
        st.initial = true;
      } else if (this.isWord('code')) {
        this.next();
        st.code = this.primary();
      } else break;
    }
    this.expectEnd("after the state name only 'initial' and 'code N' may follow");
    ast.states.push(st);
    return st;
  }

  private transition(): AstTransition {
    const kw = this.next();
    let condition: AstExpr | null = null;
    if (kw.text === 'on') {
      condition = this.expr();
      this.expectWord('go', 'write: on COND go STATE');
    }
    const target = this.expectName('a target state', 'write: go STATE');
    const tr: AstTransition = { condition, target: target.text, targetPos: this.pos(target), transfers: [], outputs: [], pos: this.pos(kw) };
    if (this.isWord('with')) {
      this.next();
      for (;;) {
        const action = this.action();
        if ('isTransfer' in action) tr.transfers.push(action.item);
        else tr.outputs.push(action.item);
        if (!this.isOp(';')) break;
        this.next();
      }
    }
    this.expectEnd("transition actions follow 'with' and are separated by ';'");
    return tr;
  }

  private action(): { isTransfer: true; item: AstTransfer } | { isOutput: true; item: AstOutputAssign } {
    const target = this.expectName('a register or output name', "write 'reg <- value' or 'out = value'");
    const op = this.next();
    if (op.kind === 'op' && op.text === '<-') return { isTransfer: true, item: { target: target.text, value: this.expr(), pos: this.pos(target) } };
    if (op.kind === 'op' && op.text === '=') return { isOutput: true, item: { target: target.text, value: this.expr(), pos: this.pos(target) } };
    this.fail(op, `expected '<-' or '=' but found ${this.describe(op)}`, "registers take 'reg <- value', outputs take 'out = value'");
  }

  // Expressions, lowest precedence first:
  // or < and < not < comparison < | < ^ < & < ++ < shifts < + - < unary - ~ < postfix [ ] < primary.
  expr(): AstExpr {
    if (++this.depth > MAX_DEPTH) this.fail(this.peek(), 'expression nested too deeply', `nest at most ${MAX_DEPTH} levels`);
    try {
      return this.orExpr();
    } finally {
      this.depth--;
    }
  }

  private binaryLevel(ops: string[], sub: () => AstExpr, words = false): AstExpr {
    let left = sub();
    for (;;) {
      const t = this.peek();
      const match = words ? t.kind === 'ident' && ops.includes(t.text) : t.kind === 'op' && ops.includes(t.text);
      if (!match) return left;
      this.next();
      const right = sub();
      left = { k: 'binary', op: t.text as AstBinaryOp, left, right, pos: this.pos(t) };
    }
  }

  private orExpr = (): AstExpr => this.binaryLevel(['or'], this.andExpr, true);
  private andExpr = (): AstExpr => this.binaryLevel(['and'], this.notExpr, true);

  private notExpr = (): AstExpr => {
    if (this.isWord('not')) {
      const t = this.next();
      return { k: 'unary', op: 'not', arg: this.nested(this.notExpr), pos: this.pos(t) };
    }
    return this.compareExpr();
  };

  private compareExpr = (): AstExpr => {
    const left = this.bitOrExpr();
    const t = this.peek();
    if (t.kind === 'op' && ['==', '!=', '<', '<=', '>', '>='].includes(t.text)) {
      this.next();
      const right = this.bitOrExpr();
      const after = this.peek();
      if (after.kind === 'op' && ['==', '!=', '<', '<=', '>', '>='].includes(after.text)) {
        this.fail(after, 'comparisons cannot be chained', "write 'a < b and b < c'");
      }
      return { k: 'binary', op: t.text as AstBinaryOp, left, right, pos: this.pos(t) };
    }
    return left;
  };

  private bitOrExpr = (): AstExpr => this.binaryLevel(['|'], this.bitXorExpr);
  private bitXorExpr = (): AstExpr => this.binaryLevel(['^'], this.bitAndExpr);
  private bitAndExpr = (): AstExpr => this.binaryLevel(['&'], this.concatExpr);
  private concatExpr = (): AstExpr => this.binaryLevel(['++'], this.shiftExpr);
  private shiftExpr = (): AstExpr => this.binaryLevel(['<<', '>>'], this.addExpr);
  private addExpr = (): AstExpr => this.binaryLevel(['+', '-'], this.unaryExpr);

  private unaryExpr = (): AstExpr => {
    const t = this.peek();
    if (t.kind === 'op' && t.text === '-' && this.peek(1).kind === 'number') {
      // A minus sign straight before a literal makes a negative literal.
      this.next();
      const num = this.next();
      return { k: 'num', value: -(num.value ?? 0n), width: num.width, signed: num.signed, pos: this.pos(t), text: '-' + num.text };
    }
    if (t.kind === 'op' && (t.text === '-' || t.text === '~')) {
      this.next();
      return { k: 'unary', op: t.text as '-' | '~', arg: this.nested(this.unaryExpr), pos: this.pos(t) };
    }
    return this.postfixExpr();
  };

  private nested(f: () => AstExpr): AstExpr {
    if (++this.depth > MAX_DEPTH) this.fail(this.peek(), 'expression nested too deeply', `nest at most ${MAX_DEPTH} levels`);
    try {
      return f();
    } finally {
      this.depth--;
    }
  }

  private postfixExpr = (): AstExpr => {
    let e = this.primary();
    while (this.isOp('[')) {
      const t = this.next();
      const msb = this.expr();
      let lsb: AstExpr | null = null;
      if (this.isOp(':')) {
        this.next();
        lsb = this.expr();
      }
      this.expectOp(']', "close the bit select with ']', e.g. x[3] or x[7:4]");
      e = { k: 'index', arg: e, msb, lsb, pos: this.pos(t) };
    }
    return e;
  };

  primary(): AstExpr {
    const t = this.next();
    if (t.kind === 'number') return { k: 'num', value: t.value ?? 0n, width: t.width, signed: t.signed, pos: this.pos(t), text: t.text };
    if (t.kind === 'op' && t.text === '(') {
      const e = this.expr();
      this.expectOp(')', "close the parenthesis with ')'");
      return e;
    }
    if (t.kind === 'ident' && !KEYWORDS.has(t.text)) {
      if (this.isOp('(')) {
        this.next();
        const args: AstExpr[] = [];
        if (!this.isOp(')')) {
          for (;;) {
            args.push(this.expr());
            if (!this.isOp(',')) break;
            this.next();
          }
        }
        this.expectOp(')', `close the argument list of ${t.text}(...)`);
        return { k: 'call', fn: t.text, args, pos: this.pos(t) };
      }
      return { k: 'name', name: t.text, pos: this.pos(t) };
    }
    if (t.kind === 'decimal') this.fail(t, `fractional number '${t.text}' in an expression`, 'only clock frequencies may have a fraction');
    this.fail(t, `expected a value but found ${this.describe(t)}`, 'a value is a number, a name, a function call or a parenthesised expression');
  }
}
