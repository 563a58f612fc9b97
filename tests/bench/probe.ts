// Bench for the design-specific probe: iCE40 resource use (Yosys synth_ice40) of the probe alone at several
// payload widths and of each demo design's board top, and the board emulator's speed. Reported, never asserted.
import { pathToFileURL } from 'node:url';
import { BoardEmulator } from '../../core/probe/emulator';
import { probeBlockFiles } from '../../core/probe/board';
import { fixtureNames } from '../support/load';
import { runYosys } from '../support/tools';
import { buildBoard } from '../probe-board';

/** LUT4 budget for the whole probe (link + command receiver + lockstep control) at 32 payload bits. */
const LUT_GOAL_32 = 250;
/** Input vector width used when the probe is measured alone. */
const PROBE_IN_BITS = 8;

type Cells = { luts: number; flipFlops: number; carries: number; rams: number };

/** Cell counts of the last `stat` in a Yosys log (synth_ice40 flattens, so there is one module). */
function cells(log: string): Cells {
  const last = log.slice(log.lastIndexOf('Number of cells'));
  const count = (re: RegExp) => [...last.matchAll(re)].reduce((s, m) => s + Number(m[1]), 0);
  return { luts: count(/SB_LUT4\s+(\d+)/g), flipFlops: count(/SB_DFF\w*\s+(\d+)/g), carries: count(/SB_CARRY\s+(\d+)/g), rams: count(/SB_RAM\w*\s+(\d+)/g) };
}

const describeCells = (c: Cells) => `${c.luts} SB_LUT4, ${c.flipFlops} flip-flops, ${c.carries} SB_CARRY, ${c.rams} SB_RAM40_4K`;

function probeAlone(): string[] {
  const files = Object.fromEntries(probeBlockFiles().map((f) => [f.name, f.text]));
  return [16, 32, 64].map((bits) => {
    const c = cells(runYosys(files, `read_verilog ${Object.keys(files).join(' ')}; chparam -set PAYLOAD_BITS ${bits} -set IN_BITS ${PROBE_IN_BITS} -set DIVISOR 104 ts_probe_ctrl; synth_ice40 -top ts_probe_ctrl; stat`));
    const goal = bits === 32 ? ` (goal <= ${LUT_GOAL_32}: ${c.luts <= LUT_GOAL_32 ? 'met' : 'missed'})` : '';
    return `probe: ts_probe_ctrl ${bits} payload bits, ${PROBE_IN_BITS} input bits, synth_ice40: ${describeCells(c)}${goal}`;
  });
}

function boards(): string[] {
  return fixtureNames().map((name) => {
    const b = buildBoard(name, { clockHz: 12_000_000, baud: 115_200 });
    const c = cells(runYosys(b.files, `read_verilog ${Object.keys(b.files).join(' ')}; synth_ice40 -top ${b.build.top}; stat`));
    return `probe: ${b.build.top} (${b.build.layout.frame.payloadBits} payload bits), synth_ice40: ${describeCells(c)}`;
  });
}

function emulatorSpeed(): string[] {
  return fixtureNames().map((name) => {
    const b = buildBoard(name);
    let best = Infinity;
    const cycles = 50_000;
    for (let round = 0; round < 3; round++) {
      const emu = new BoardEmulator({ machine: b.machine, synthesis: b.syn, layout: b.build.layout, random: { seed: round + 1 } });
      const t0 = performance.now();
      emu.produce(Number.MAX_SAFE_INTEGER, cycles);
      best = Math.min(best, performance.now() - t0);
    }
    return `probe: BoardEmulator ${name}: ${Math.round(cycles / (best / 1000))} frames/s (random pins, ${cycles} cycles, best of 3)`;
  });
}

/** Lines of figures for the bench report. */
export async function benchProbe(): Promise<string> {
  return [...probeAlone(), ...boards(), ...emulatorSpeed()].join('\n');
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  benchProbe().then((text) => console.log(text));
}
