// Resource cost of each encoding: Yosys synth_ice40 LUT4 and flip-flop counts for every demo design's
// generated top (behavioral controller), the figures a user compares encodings by.
import { fixtureNames, loadFixture } from '../support/load';
import { buildFixture, designFiles, encodingsOf } from '../support/hdl';
import { runYosys } from '../support/tools';

export async function benchHdl(): Promise<string> {
  const lines = ['Yosys synth_ice40 resources per design and encoding (behavioral controller; LUT4 / flip-flops / carry)'];
  lines.push(`  ${'design'.padEnd(16)} ${['binary', 'gray', 'onehot', 'custom'].map((e) => e.padStart(16)).join('')}`);
  for (const name of fixtureNames()) {
    const { machine } = loadFixture(name);
    const cells: string[] = [];
    for (const enc of ['binary', 'gray', 'onehot', 'custom'] as const) {
      if (!encodingsOf(machine).includes(enc)) {
        cells.push('—'.padStart(16));
        continue;
      }
      const b = buildFixture(name, enc, 'behavioral', 0);
      const files = designFiles(b);
      const log = runYosys(files, `read_verilog ${Object.keys(files).join(' ')}; synth_ice40 -top ${b.hdl.names.top}; stat`);
      const count = (cell: RegExp) => [...log.matchAll(cell)].map((x) => Number(x[1])).pop() ?? 0;
      const luts = count(/SB_LUT4\s+(\d+)/g);
      const ffs = ['SB_DFF', 'SB_DFFE', 'SB_DFFR', 'SB_DFFS', 'SB_DFFER', 'SB_DFFES', 'SB_DFFSR', 'SB_DFFSS', 'SB_DFFESR', 'SB_DFFESS'].reduce((a, c) => a + count(new RegExp(`${c}\\s+(\\d+)`, 'g')), 0);
      const carry = count(/SB_CARRY\s+(\d+)/g);
      cells.push(`${luts} / ${ffs} / ${carry}`.padStart(16));
    }
    lines.push(`  ${name.padEnd(16)} ${cells.join('')}`);
  }
  return lines.join('\n');
}
