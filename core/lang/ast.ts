// Syntax tree of a design file, exactly as written: names unresolved, widths unchecked.
// The checker turns it into the typed IR; no later stage looks at this tree.

export interface Pos {
  line: number;
  col: number;
}

export type AstBinaryOp = '+' | '-' | '&' | '|' | '^' | '<<' | '>>' | '++' | '==' | '!=' | '<' | '<=' | '>' | '>=' | 'and' | 'or';

export type AstExpr =
  | { k: 'num'; value: bigint; width?: number; signed?: boolean; pos: Pos; text: string }
  | { k: 'name'; name: string; pos: Pos }
  | { k: 'unary'; op: '-' | '~' | 'not'; arg: AstExpr; pos: Pos }
  | { k: 'binary'; op: AstBinaryOp; left: AstExpr; right: AstExpr; pos: Pos }
  | { k: 'index'; arg: AstExpr; msb: AstExpr; lsb: AstExpr | null; pos: Pos }
  | { k: 'call'; fn: string; args: AstExpr[]; pos: Pos };

export interface AstType {
  width: number;
  signed: boolean;
  pos: Pos;
}

export interface AstTransfer {
  target: string;
  value: AstExpr;
  pos: Pos;
}

export interface AstOutputAssign {
  target: string;
  value: AstExpr;
  pos: Pos;
}

export interface AstTransition {
  condition: AstExpr | null;
  target: string;
  targetPos: Pos;
  transfers: AstTransfer[];
  outputs: AstOutputAssign[];
  pos: Pos;
}

export interface AstState {
  name: string;
  initial: boolean;
  code: AstExpr | null;
  transfers: AstTransfer[];
  outputs: AstOutputAssign[];
  transitions: AstTransition[];
  pos: Pos;
}

export interface AstDesign {
  machine: { name: string; pos: Pos } | null;
  clock: { hz: number; pos: Pos } | null;
  constants: { name: string; type: AstType | null; value: AstExpr; pos: Pos }[];
  inputs: { name: string; type: AstType; synced: boolean; pos: Pos }[];
  outputs: { name: string; type: AstType; defaultValue: AstExpr | null; pos: Pos }[];
  registers: { name: string; type: AstType; reset: AstExpr | null; pos: Pos }[];
  states: AstState[];
}
