// Builds the generated HDL of a demo design for the outside-tool tests.
import { synthesize } from '../../core/synth/index';
import type { EncodingKind, Synthesis } from '../../core/synth/schema';
import { generateHdl, type ControllerStyle, type HdlResult } from '../../core/hdl/modules';
import { generateTestbench } from '../../core/hdl/testbench';
import { simulate, type TraceRow } from '../../core/model/trace';
import { randomStimulus } from '../../core/model/stimulus';
import type { Machine } from '../../core/ir/schema';
import { loadFixture } from './load';

export const ENCODINGS: EncodingKind[] = ['binary', 'gray', 'onehot', 'custom'];
export const STYLES: ControllerStyle[] = ['behavioral', 'equations'];

/** Encodings a fixture supports (custom only where the design gives state codes). */
export function encodingsOf(m: Machine): EncodingKind[] {
  return ENCODINGS.filter((e) => e !== 'custom' || m.states.every((s) => s.code !== null));
}

export function synthFor(m: Machine, encoding: EncodingKind): Synthesis {
  const s = synthesize(m, { encoding });
  if (!s.ok) throw new Error(`${m.name} ${encoding}: ${s.error}`);
  return s.result;
}

export interface Build {
  machine: Machine;
  syn: Synthesis;
  hdl: HdlResult;
  rows: bigint[][];
  trace: TraceRow[];
  files: Record<string, string>;
}

/** The fixture's own stimulus followed by `randomCycles` seeded random cycles, with testbench. */
export function buildFixture(name: string, encoding: EncodingKind, controller: ControllerStyle, randomCycles = 1000): Build {
  const { machine, rows: fixtureRows } = loadFixture(name);
  const syn = synthFor(machine, encoding);
  const hdl = generateHdl(machine, syn, { controller, reset: encoding === 'gray' ? 'high' : 'low' });
  const rows = [...fixtureRows, ...randomStimulus(machine, randomCycles, 1234)];
  const trace = simulate(machine, rows);
  const tb = generateTestbench(machine, hdl.names, rows, trace);
  const files: Record<string, string> = {};
  for (const f of [...hdl.files, tb]) files[f.name] = f.text;
  return { machine, syn, hdl, rows, trace, files };
}

export function designFiles(b: Build): Record<string, string> {
  return Object.fromEntries(b.hdl.files.map((f) => [f.name, f.text]));
}
