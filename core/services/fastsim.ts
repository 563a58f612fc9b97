// Fast simulation for the service path: the compiled model driven with number inputs (bigint only above
// 32 bits), change lists built cycle by cycle and handed out in chunks, so a million cycles stream with progress.
import type { Machine } from '../ir/schema';
import { compileModel, toRep, type CompiledModel, type RepValue } from '../model/compiled';
import { SeededRandom } from '../util/prng';
import type { Track, TrackAppend, TrackMeta } from './api';

/** Where the input values come from: the same seeded sequence as `randomStimulus`, or parsed rows (repeated). */
export type FastStimulus = { kind: 'random'; seed: number } | { kind: 'rows'; rows: bigint[][] };

/** Decimal text of small values, made once: most changes are of 1-bit and byte-wide signals. */
const SMALL = Array.from({ length: 256 }, (_, i) => String(i));

export function valueString(v: RepValue): string {
  return typeof v === 'number' && v < 256 ? SMALL[v] : v.toString();
}

/** Track order shared by every waveform of a design: inputs, the state, registers, outputs. */
export function simTrackMeta(m: Machine): TrackMeta[] {
  const stateBits = Math.max(1, Math.ceil(Math.log2(Math.max(2, m.states.length))));
  const sig = (group: TrackMeta['group']) => (x: { name: string; type: { width: number; signed: boolean } }): TrackMeta => ({ name: x.name, group, width: x.type.width, signed: x.type.signed });
  return [...m.inputs.map(sig('input')), { name: 'state', group: 'state', width: stateBits, signed: false }, ...m.registers.map(sig('register')), ...m.outputs.map(sig('output'))];
}

/** One change list under construction; `from` marks what the last drain already handed out. */
class ChangeList {
  at: number[] = [];
  values: string[] = [];
  last: RepValue | null = null;
  from = 0;

  push(cycle: number, v: RepValue): void {
    if (v === this.last) return;
    this.last = v;
    this.at.push(cycle);
    this.values.push(valueString(v));
  }

  drain(): TrackAppend {
    const out = { at: this.at.slice(this.from), values: this.values.slice(this.from) };
    this.from = this.at.length;
    return out;
  }
}

export class FastSimulation {
  readonly meta: TrackMeta[];
  readonly stateNames: string[];
  private readonly model: CompiledModel;
  private readonly lists: ChangeList[];
  private readonly widths: number[];
  private readonly rng: SeededRandom | null;
  private readonly rows: bigint[][] | null;
  private readonly inputs: RepValue[];
  private readonly outputs: RepValue[];
  private cycle = 0;

  constructor(
    private readonly m: Machine,
    stimulus: FastStimulus,
    readonly total: number,
  ) {
    this.meta = simTrackMeta(m);
    this.stateNames = m.states.map((s) => s.name);
    this.model = compileModel(m);
    this.lists = this.meta.map(() => new ChangeList());
    this.widths = m.inputs.map((i) => i.type.width);
    this.rng = stimulus.kind === 'random' ? new SeededRandom(stimulus.seed) : null;
    this.rows = stimulus.kind === 'rows' ? stimulus.rows : null;
    // Like `simulate`: rows repeat when there are fewer than cycles; no rows for a design with inputs runs nothing.
    if (this.rows && this.rows.length === 0 && m.inputs.length > 0) this.total = 0;
    this.inputs = new Array(m.inputs.length).fill(0);
    this.outputs = new Array(m.outputs.length).fill(0);
  }

  get done(): number {
    return this.cycle;
  }

  get finished(): boolean {
    return this.cycle >= this.total;
  }

  private nextInputs(cycle: number): void {
    const w = this.widths;
    const inp = this.inputs;
    if (this.rng) {
      const rng = this.rng;
      // The same draws as SeededRandom.bits: one 32-bit word per input up to 32 bits.
      for (let k = 0; k < w.length; k++) {
        const width = w[k];
        if (width > 32) inp[k] = rng.bits(width);
        else {
          const u = rng.nextU32();
          inp[k] = width === 32 ? u : u & (2 ** width - 1);
        }
      }
      return;
    }
    const row = this.rows![cycle % this.rows!.length];
    for (let k = 0; k < w.length; k++) inp[k] = toRep(row[k], w[k]);
  }

  /** Runs up to `maxCycles` more cycles; returns how many ran. */
  run(maxCycles: number): number {
    const end = Math.min(this.total, this.cycle + Math.max(0, Math.floor(maxCycles)));
    const lists = this.lists;
    const nIn = this.widths.length;
    const stateList = lists[nIn];
    const nReg = this.m.registers.length;
    const nOut = this.outputs.length;
    const start = this.cycle;
    for (let c = this.cycle; c < end; c++) {
      this.nextInputs(c);
      for (let k = 0; k < nIn; k++) lists[k].push(c, this.inputs[k]);
      stateList.push(c, this.model.state());
      if (nReg) {
        const regs = this.model.regs();
        for (let k = 0; k < nReg; k++) lists[nIn + 1 + k].push(c, regs[k]);
      }
      this.model.step(this.inputs, this.outputs);
      for (let k = 0; k < nOut; k++) lists[nIn + 1 + nReg + k].push(c, this.outputs[k]);
    }
    this.cycle = end;
    return end - start;
  }

  /** The change-list entries made since the previous drain, one append per track. */
  drain(): TrackAppend[] {
    return this.lists.map((l) => l.drain());
  }

  /** Whole tracks (for callers that want the full result at once). */
  tracks(): Track[] {
    return this.meta.map((meta, k) => ({ ...meta, at: this.lists[k].at, values: this.lists[k].values }));
  }
}

/** Runs a whole simulation and returns its tracks. */
export function simulateTracks(m: Machine, stimulus: FastStimulus, cycles: number): { cycles: number; tracks: Track[] } {
  const sim = new FastSimulation(m, stimulus, cycles);
  sim.run(sim.total);
  return { cycles: sim.done, tracks: sim.tracks() };
}
