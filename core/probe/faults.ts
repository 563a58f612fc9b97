// Faults the board emulator can inject, and a compact text form for the command line
// (`stuck:poured:3:1@40`, `transition:Pump->Idle@25`, `drop:500`, `baud:1.07:9`).
import type { Machine } from '../ir/schema';

export type Fault =
  /** Bit `bit` of `register` reads `value` in every cycle from design cycle `from` on. */
  | { kind: 'stuck'; register: string; bit: number; value: 0 | 1; from: number }
  /** In every cycle from design cycle `from` on that the machine spends in state `state`, it goes to `to` next. */
  | { kind: 'transition'; state: string; to: string; from: number }
  /** Every `every`-th byte on the line is lost (the `every`-th, the 2·`every`-th, ...). */
  | { kind: 'drop'; every: number }
  /**
   * The host's receiver runs at `ratio` times the board's baud (1.07 = 7% fast): the 8N1 line is re-sampled
   * at that rate, with the start-edge detection delay drawn from a generator seeded with `seed`.
   */
  | { kind: 'baud'; ratio: number; seed: number };

export type FaultResult = { ok: true; fault: Fault } | { ok: false; error: string };
export type FaultListResult = { ok: true; faults: Fault[] } | { ok: false; error: string };

/** Receiver/transmitter rate ratios the line model accepts; beyond them nothing byte-like would arrive. */
export const MIN_BAUD_RATIO = 0.5;
export const MAX_BAUD_RATIO = 2;

export const FAULT_SYNTAX = [
  'stuck:REGISTER:BIT:0|1[@CYCLE]      a register bit stuck from a design cycle on (default 0)',
  'transition:STATE->TARGET[@CYCLE]    the machine goes to TARGET whenever it is in STATE, from a cycle on',
  'drop:N                              every N-th byte on the line is lost (N >= 2)',
  'baud:RATIO[:SEED]                   the host receives at RATIO times the board baud (e.g. 1.07), seeded',
].join('\n');

function nonNegativeInt(text: string): number | null {
  return /^\d{1,9}$/.test(text) ? Number(text) : null;
}

/** Split `BODY@CYCLE`; the cycle defaults to 0. */
function splitCycle(text: string, spec: string): { body: string; from: number } | { error: string } {
  const at = text.lastIndexOf('@');
  if (at < 0) return { body: text, from: 0 };
  const from = nonNegativeInt(text.slice(at + 1));
  if (from === null) return { error: `fault '${spec}': '@${text.slice(at + 1)}' is not a cycle number (write @40)` };
  return { body: text.slice(0, at), from };
}

/** Parse one fault spec against a design, naming the spec and what is wrong in every error. */
export function parseFaultSpec(text: string, m: Machine): FaultResult {
  const spec = typeof text === 'string' ? text.trim() : '';
  const colon = spec.indexOf(':');
  const kind = colon < 0 ? spec : spec.slice(0, colon);
  const rest = colon < 0 ? '' : spec.slice(colon + 1);
  const fail = (why: string): FaultResult => ({ ok: false, error: `fault '${spec}': ${why}` });
  switch (kind) {
    case 'stuck': {
      const split = splitCycle(rest, spec);
      if ('error' in split) return { ok: false, error: split.error };
      const parts = split.body.split(':');
      if (parts.length !== 3) return fail('expected stuck:REGISTER:BIT:VALUE[@CYCLE], e.g. stuck:count:3:1@40');
      const [name, bitText, valueText] = parts;
      const reg = m.registers.find((r) => r.name === name);
      if (!reg) return fail(`'${name}' is not a register of ${m.name} (registers: ${m.registers.map((r) => r.name).join(', ') || 'none'})`);
      const bit = nonNegativeInt(bitText);
      if (bit === null || bit >= reg.type.width) return fail(`bit '${bitText}' is not a bit of ${name} (0 to ${reg.type.width - 1})`);
      if (valueText !== '0' && valueText !== '1') return fail(`stuck value '${valueText}' must be 0 or 1`);
      return { ok: true, fault: { kind: 'stuck', register: name, bit, value: valueText === '1' ? 1 : 0, from: split.from } };
    }
    case 'transition': {
      const split = splitCycle(rest, spec);
      if ('error' in split) return { ok: false, error: split.error };
      const arrow = split.body.indexOf('->');
      if (arrow < 0) return fail('expected transition:STATE->TARGET[@CYCLE], e.g. transition:Busy->Idle@25');
      const state = split.body.slice(0, arrow);
      const to = split.body.slice(arrow + 2);
      const names = m.states.map((s) => s.name);
      for (const s of [state, to]) if (!names.includes(s)) return fail(`'${s}' is not a state of ${m.name} (states: ${names.join(', ')})`);
      return { ok: true, fault: { kind: 'transition', state, to, from: split.from } };
    }
    case 'drop': {
      const every = nonNegativeInt(rest);
      if (every === null || every < 2) return fail('expected drop:N with a whole number N of at least 2 (one byte in N is lost)');
      return { ok: true, fault: { kind: 'drop', every } };
    }
    case 'baud': {
      const parts = rest.split(':');
      if (parts.length > 2 || parts[0] === '') return fail('expected baud:RATIO[:SEED], e.g. baud:1.07:9');
      const ratio = /^\d+(\.\d+)?$/.test(parts[0]) ? Number(parts[0]) : NaN;
      if (!(ratio >= MIN_BAUD_RATIO && ratio <= MAX_BAUD_RATIO)) return fail(`ratio '${parts[0]}' must be a number from ${MIN_BAUD_RATIO} to ${MAX_BAUD_RATIO}`);
      const seed = parts.length === 2 ? nonNegativeInt(parts[1]) : 1;
      if (seed === null) return fail(`seed '${parts[1]}' must be a whole number`);
      return { ok: true, fault: { kind: 'baud', ratio, seed } };
    }
    default:
      return fail(`unknown fault kind '${kind}'; one of:\n${FAULT_SYNTAX}`);
  }
}

/** Comma-separated fault specs; the first bad one is reported. */
export function parseFaultList(text: string, m: Machine): FaultListResult {
  const faults: Fault[] = [];
  for (const part of String(text).split(',').map((p) => p.trim()).filter((p) => p.length > 0)) {
    const r = parseFaultSpec(part, m);
    if (!r.ok) return r;
    faults.push(r.fault);
  }
  return { ok: true, faults };
}

/** Problems with faults built in code rather than parsed (the emulator checks them before it starts). */
export function faultProblems(faults: readonly Fault[], m: Machine): string[] {
  const problems: string[] = [];
  faults.forEach((f, i) => {
    const where = `fault ${i}`;
    if (!f || typeof f !== 'object') return problems.push(`${where}: not a fault`);
    switch (f.kind) {
      case 'stuck': {
        const reg = m.registers.find((r) => r.name === f.register);
        if (!reg) problems.push(`${where}: '${String(f.register)}' is not a register of ${m.name}`);
        else if (!Number.isInteger(f.bit) || f.bit < 0 || f.bit >= reg.type.width) problems.push(`${where}: bit ${String(f.bit)} is not a bit of ${f.register}`);
        if (f.value !== 0 && f.value !== 1) problems.push(`${where}: stuck value must be 0 or 1`);
        if (!Number.isInteger(f.from) || f.from < 0) problems.push(`${where}: start cycle must be a non-negative integer`);
        break;
      }
      case 'transition':
        for (const s of [f.state, f.to]) if (!m.states.some((x) => x.name === s)) problems.push(`${where}: '${String(s)}' is not a state of ${m.name}`);
        if (!Number.isInteger(f.from) || f.from < 0) problems.push(`${where}: start cycle must be a non-negative integer`);
        break;
      case 'drop':
        if (!Number.isInteger(f.every) || f.every < 2) problems.push(`${where}: drop interval must be an integer of at least 2`);
        break;
      case 'baud':
        if (!(f.ratio >= MIN_BAUD_RATIO && f.ratio <= MAX_BAUD_RATIO)) problems.push(`${where}: baud ratio must be from ${MIN_BAUD_RATIO} to ${MAX_BAUD_RATIO}`);
        if (!Number.isInteger(f.seed)) problems.push(`${where}: seed must be an integer`);
        break;
      default:
        problems.push(`${where}: unknown kind '${String((f as { kind?: unknown }).kind)}'`);
    }
  });
  return problems;
}

/** The spec text of a fault (inverse of parseFaultSpec). */
export function formatFault(f: Fault): string {
  switch (f.kind) {
    case 'stuck':
      return `stuck:${f.register}:${f.bit}:${f.value}@${f.from}`;
    case 'transition':
      return `transition:${f.state}->${f.to}@${f.from}`;
    case 'drop':
      return `drop:${f.every}`;
    case 'baud':
      return `baud:${f.ratio}:${f.seed}`;
  }
}
