// A Verilog testbench that replays a capture's inputs into the generated design in simulation: the inputs
// the board's controller saw, cycle by cycle from a reset, checked against the model's trace. If the board
// diverged but this testbench passes, the divergence does not reproduce in simulation (look at the board:
// timing, wiring, reset); if it fails at the same cycle, the generated design itself differs from the model.
import type { HdlNames } from '../hdl/modules';
import { generateTestbench } from '../hdl/testbench';
import type { Machine } from '../ir/schema';
import { simulate } from '../model/trace';
import type { FrameObservation } from '../compare/comparator';
import type { ProbeMap } from '../compare/probe-map';

/** Default limit on replayed cycles: the testbench holds every row as an initial assignment. */
export const DEFAULT_TESTBENCH_CYCLES = 20_000;

export type ReplayTestbenchResult =
  | { ok: true; name: string; text: string; cycles: number; firstDivergence: number | null; note: string }
  | { ok: false; error: string };

/**
 * Collects input rows from the frames of one reset segment: the first segment with a divergence (or the
 * last one seen when none diverged), up to a gap (inputs of lost frames are unknown) or `maxCycles`.
 */
export class ReplayTestbenchCollector {
  private rows: bigint[][] = [];
  private segmentOffset = 0;
  private firstDivergence: number | null = null;
  private frozen = false;
  private open = false;
  private truncatedBy: 'gap' | 'limit' | null = null;
  private segments = 0;

  constructor(
    private readonly m: Machine,
    private readonly map: ProbeMap,
    private readonly maxCycles = DEFAULT_TESTBENCH_CYCLES,
  ) {}

  observe(f: FrameObservation): void {
    if (this.frozen) return;
    if (f.afterReset) {
      // A new segment from reset, unless the current one already holds a divergence worth replaying.
      if (this.open && this.firstDivergence !== null) return this.freeze();
      this.rows = [];
      this.truncatedBy = null;
      this.open = true;
      this.segments++;
      this.segmentOffset = f.cycle;
    }
    if (!this.open || this.truncatedBy) return;
    if (f.afterGap) {
      this.truncatedBy = 'gap';
      if (this.firstDivergence !== null) this.freeze();
      return;
    }
    if (this.rows.length >= this.maxCycles) {
      this.truncatedBy = 'limit';
      if (this.firstDivergence !== null) this.freeze();
      return;
    }
    this.rows.push(this.map.inputs.map((field) => f.board[field]));
    if (f.diverged.length && this.firstDivergence === null) this.firstDivergence = f.cycle - this.segmentOffset;
  }

  private freeze(): void {
    this.frozen = true;
  }

  /** The testbench for the collected segment, for the HDL whose `names` are given. */
  build(names: HdlNames, source: string): ReplayTestbenchResult {
    if (this.segments === 0 || this.rows.length === 0) {
      return { ok: false, error: 'the capture has no frames after a reset the board announced, so the inputs from reset are unknown and nothing can be replayed from the design\'s reset' };
    }
    const trace = simulate(this.m, this.rows);
    const tb = generateTestbench(this.m, names, this.rows, trace);
    const cut = this.truncatedBy === 'gap' ? ', ending where frames were lost' : this.truncatedBy === 'limit' ? `, limited to ${this.maxCycles} cycles` : '';
    const div = this.firstDivergence === null ? 'the board did not diverge in this stretch' : `the board diverged first at cycle ${this.firstDivergence}`;
    const note = `replays ${this.rows.length} captured input rows from reset${cut}; ${div}`;
    const head = [
      `// Replay of ${source}: ${note}.`,
      '// PASS means the generated design follows the model on these inputs, so a board divergence does not reproduce',
      '// in simulation; FAIL at a cycle means it does.',
    ].join('\n');
    return { ok: true, name: tb.name, text: `${head}\n${tb.text}`, cycles: this.rows.length, firstDivergence: this.firstDivergence, note };
  }
}
