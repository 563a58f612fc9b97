// VCD export of a replay: read back with a small reader written here against the grammar of IEEE Std
// 1364-2005 clause 18.2 (value change dump format), and converted by Debian gtkwave's vcd2fst to FST and
// back with fst2vcd: the values the outside tools see must be the board's and the model's, cycle by cycle.
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { captureHeader } from '../core/capture/header';
import { randomStimulus } from '../core/model/stimulus';
import { vcdIdentifier } from '../core/export/vcd';
import { CaptureWriter } from '../main/serial/capture-file';
import { compare, design, divergences, probeStream, runBoard } from './compare-frames';
import { cli } from './support/cli';
import { FIXTURES } from './support/load';
import { requireTool, tempDir } from './support/tools';

interface Vcd {
  timescale: string;
  /** Hierarchical name (scopes joined with '.') to identifier code and width. */
  vars: Map<string, { id: string; width: number; type: string }>;
  /** Identifier code to its changes in time order; value null for x/z. */
  changes: Map<string, { time: number; value: bigint | null }[]>;
  times: number[];
}

/**
 * IEEE 1364-2005 18.2: the file is whitespace-separated tokens. Declaration commands ($comment, $date,
 * $enddefinitions, $scope, $timescale, $upscope, $var, $version) end with $end; simulation commands are
 * #time, $dumpall/$dumpoff/$dumpon/$dumpvars ... $end, $comment ... $end, and value changes: a scalar
 * [01xXzZ] directly followed by the identifier code, or b/B binary digits, space, identifier (r/R for reals).
 */
function parseVcd(text: string): Vcd {
  const tokens = text.split(/\s+/).filter(Boolean);
  const vars = new Map<string, { id: string; width: number; type: string }>();
  const changes = new Map<string, { time: number; value: bigint | null }[]>();
  const scopes: string[] = [];
  const times: number[] = [];
  let timescale = '';
  let time = -1;
  let i = 0;
  const untilEnd = () => {
    const body: string[] = [];
    while (tokens[i] !== '$end') {
      if (i >= tokens.length) throw new Error('missing $end');
      body.push(tokens[i++]);
    }
    i++;
    return body;
  };
  let definitions = true;
  while (i < tokens.length) {
    const t = tokens[i++];
    if (definitions) {
      switch (t) {
        case '$scope': {
          const [, name] = untilEnd();
          scopes.push(name);
          break;
        }
        case '$upscope':
          untilEnd();
          scopes.pop();
          break;
        case '$var': {
          const [type, size, id, ref] = untilEnd();
          vars.set([...scopes, ref].join('.'), { id, width: Number(size), type });
          changes.set(id, changes.get(id) ?? []);
          break;
        }
        case '$timescale':
          timescale = untilEnd().join(' ');
          break;
        case '$enddefinitions':
          untilEnd();
          definitions = false;
          break;
        case '$comment':
        case '$date':
        case '$version':
          untilEnd();
          break;
        default:
          throw new Error(`unexpected token in the declarations: ${t}`);
      }
      continue;
    }
    if (t.startsWith('#')) {
      const next = Number(t.slice(1));
      if (!Number.isInteger(next) || next < time) throw new Error(`simulation time ${t} is not a non-decreasing integer`);
      time = next;
      times.push(time);
      continue;
    }
    if (['$dumpvars', '$dumpall', '$dumpon', '$dumpoff', '$end'].includes(t)) continue;
    if (t === '$comment') {
      untilEnd();
      continue;
    }
    const note = (id: string, value: bigint | null) => {
      const list = changes.get(id);
      if (!list) throw new Error(`value change for undeclared identifier ${id}`);
      list.push({ time, value });
    };
    if (/^[01xXzZ]/.test(t) && t.length > 1) {
      note(t.slice(1), /[xXzZ]/.test(t[0]) ? null : BigInt(t[0]));
      continue;
    }
    if (/^[bB]/.test(t)) {
      const digits = t.slice(1);
      const id = tokens[i++];
      note(id, /[xXzZ]/.test(digits) ? null : BigInt(`0b${digits}`));
      continue;
    }
    throw new Error(`unexpected token in the value changes: ${t}`);
  }
  return { timescale, vars, changes, times };
}

/** Value of a variable at a time: the last change at or before it. */
function valueAt(vcd: Vcd, name: string, time: number): bigint | null | undefined {
  const v = vcd.vars.get(name);
  if (!v) throw new Error(`no variable ${name}; have ${[...vcd.vars.keys()].join(', ')}`);
  let value: bigint | null | undefined;
  for (const c of vcd.changes.get(v.id)!) {
    if (c.time > time) break;
    value = c.value;
  }
  return value;
}

describe('VCD export', () => {
  it('identifier codes are distinct printable ASCII (33 to 126), as the standard requires', () => {
    const ids = Array.from({ length: 20000 }, (_, n) => vcdIdentifier(n));
    expect(new Set(ids).size).toBe(ids.length);
    expect(ids.every((s) => /^[\x21-\x7e]+$/.test(s))).toBe(true);
  });

  it('board, model and divergence marker read back by the grammar, and through vcd2fst/fst2vcd unchanged', async () => {
    requireTool('vcd2fst');
    requireTool('fst2vcd');
    const d = design('tank_dosing');
    const rows = randomStimulus(d.m, 600, 4);
    const plain = runBoard(d, rows);
    const pump = d.m.states.findIndex((s) => s.name === 'Pump');
    const at = plain.findIndex((c, k) => k > 100 && c.state === pump && c.computedNext !== 3);
    const board = runBoard(d, rows, [{ kind: 'jump', at, to: 3 }]);
    const stream = probeStream(d.layout, board);
    const dir = tempDir('vcd');
    const capture = path.join(dir, 'run.tscap');
    const w = CaptureWriter.create(capture, captureHeader(d.m, d.layout, { port: 'test', baud: 115200, clockHz: 12e6 }, new Date('2024-01-02T03:04:05Z'), { drive: null, cycles: null }));
    if (!w.ok) throw new Error(w.error);
    w.writer.receivedBytes(stream);
    w.writer.close('test');
    const out = path.join(dir, 'run.vcd');
    const r = await cli(['replay', capture, '--design', path.join(FIXTURES, 'tank_dosing.tsm'), '--vcd', out]);
    expect(r.code).toBe(3);

    const vcd = parseVcd(readFileSync(out, 'utf8'));
    // 12 MHz: 83333 ps per cycle (rounded), time unit 1 ps.
    expect(vcd.timescale).toBe('1 ps');
    const period = 83333;
    const top = 'tank_dosing';
    const stateField = d.layout.fields.findIndex((f) => f.kind === 'state');
    const poured = d.layout.fields.findIndex((f) => f.name === 'reg.poured');
    const divergent = new Set(divergences(compare(d, stream)).map((v) => v.cycle));
    expect(divergent).toEqual(new Set([at + 1]));
    for (let k = 0; k < board.length; k++) {
      const t = k * period;
      expect(valueAt(vcd, `${top}.board.state`, t)).toBe(board[k].values[stateField]);
      expect(valueAt(vcd, `${top}.board.reg_poured`, t)).toBe(board[k].values[poured]);
      expect(valueAt(vcd, `${top}.cycle`, t)).toBe(BigInt(k));
      expect(valueAt(vcd, `${top}.divergence`, t)).toBe(divergent.has(k) ? 1n : 0n);
    }
    // At the divergent cycle the model expected the state the machine computed, not the one the board took.
    const expectedCode = BigInt(parseInt(d.syn.encoding.codes[board[at].computedNext], 2));
    expect(valueAt(vcd, `${top}.model.state`, (at + 1) * period)).toBe(expectedCode);
    expect(valueAt(vcd, `${top}.board.state`, (at + 1) * period)).toBe(3n);
    // Inputs have no model counterpart.
    expect(vcd.vars.has(`${top}.model.in_dose`)).toBe(false);

    // The outside reader: convert to FST and back; every variable must have the same value at every cycle.
    const fst = path.join(dir, 'run.fst');
    execFileSync('vcd2fst', [out, fst], { stdio: 'pipe' });
    const back = parseVcd(execFileSync('fst2vcd', [fst], { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 }));
    for (const name of vcd.vars.keys()) {
      expect(back.vars.has(name), name).toBe(true);
      for (let k = 0; k < board.length; k += 7) expect(valueAt(back, name, k * period), `${name} at cycle ${k}`).toBe(valueAt(vcd, name, k * period));
    }
  });
});
