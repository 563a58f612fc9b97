// Diagnostics are values: a place in the design text, a severity, a message and a one-line hint.
// Every stage that can reject input returns these instead of throwing.

export type Severity = 'error' | 'warning';

export interface Diagnostic {
  severity: Severity;
  line: number;
  col: number;
  message: string;
  hint: string;
}

export function diag(severity: Severity, line: number, col: number, message: string, hint: string): Diagnostic {
  return { severity, line, col, message, hint };
}

/** `FILE:LINE:COL: error|warning: message` then the hint on its own indented line. */
export function formatDiagnostic(file: string, d: Diagnostic): string {
  return `${file}:${d.line}:${d.col}: ${d.severity}: ${d.message}\n    hint: ${d.hint}`;
}

export function hasErrors(ds: readonly Diagnostic[]): boolean {
  return ds.some((d) => d.severity === 'error');
}

export function sortDiagnostics(ds: Diagnostic[]): Diagnostic[] {
  return [...ds].sort((a, b) => a.line - b.line || a.col - b.col || (a.severity === b.severity ? 0 : a.severity === 'error' ? -1 : 1));
}
