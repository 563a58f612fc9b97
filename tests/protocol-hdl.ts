// Helpers for the protocol's Verilog tests: write the generic blocks to a temporary folder and run the Debian
// tools on them (Icarus Verilog, Verilator, Yosys). A missing tool is an error, never a skipped test.
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { protocolVerilogBlocks } from '../core/protocol/verilog/index';

export type ToolRun = { stdout: string; stderr: string };

/** Run an outside tool; throws with the tool's name and output when it is missing or fails. */
export function runTool(tool: string, args: string[], cwd: string, timeoutMs = 300_000): ToolRun {
  const r = spawnSync(tool, args, { cwd, encoding: 'utf8', timeout: timeoutMs, maxBuffer: 64 * 1024 * 1024 });
  if (r.error) {
    const missing = (r.error as NodeJS.ErrnoException).code === 'ENOENT';
    throw new Error(missing ? `${tool} is not installed (Debian packages: iverilog, verilator, yosys)` : `${tool}: ${r.error.message}`);
  }
  if (r.status !== 0) throw new Error(`${tool} ${args.join(' ')} exited with ${r.status}\n${r.stdout}\n${r.stderr}`);
  return { stdout: r.stdout, stderr: r.stderr };
}

/** A fresh temporary folder holding every generic block as <module>.v; returns its path and the file names. */
export function writeBlocks(prefix: string): { dir: string; files: string[] } {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), `twinstep-${prefix}-`));
  const files = protocolVerilogBlocks().map((b) => {
    const file = `${b.module}.v`;
    fs.writeFileSync(path.join(dir, file), b.source);
    return file;
  });
  return { dir, files };
}

/** Compile with Icarus Verilog in Verilog-2001 mode and run the simulation; returns its printed lines. */
export function simulate(dir: string, files: string[], top: string): string[] {
  runTool('iverilog', ['-g2001', '-Wall', '-o', 'sim.vvp', '-s', top, ...files], dir);
  const { stdout } = runTool('vvp', ['-n', 'sim.vvp'], dir);
  return stdout.split('\n').filter((l) => l.length > 0);
}

/** Bytes printed by a testbench as lines "<tag> <hex>". */
export function bytesTagged(lines: string[], tag: string): number[] {
  return lines.filter((l) => l.startsWith(`${tag} `)).map((l) => parseInt(l.slice(tag.length + 1), 16));
}

export function hexLines(values: Array<number | bigint>, digits: number): string {
  return values.map((v) => v.toString(16).padStart(digits, '0')).join('\n') + '\n';
}

export type Ice40Cells = { luts: number; flipFlops: number; carries: number; blockRams: number; cells: Record<string, number>; log: string };

/** Synthesize ts_probe_link for the iCE40 with Yosys (`synth_ice40`) at a payload width; returns the cell counts. */
export function synthIce40(payloadBits: number, divisor = 104): Ice40Cells {
  const { dir, files } = writeBlocks(`yosys${payloadBits}`);
  const script = [
    `read_verilog ${files.join(' ')}`,
    `chparam -set PAYLOAD_BITS ${payloadBits} -set DIVISOR ${divisor} ts_probe_link`,
    'synth_ice40 -top ts_probe_link',
    'tee -o stat.txt stat',
  ].join('; ');
  const { stdout } = runTool('yosys', ['-p', script], dir);
  const stat = fs.readFileSync(path.join(dir, 'stat.txt'), 'utf8');
  const cells: Record<string, number> = {};
  for (const m of stat.matchAll(/^\s+(SB_\w+)\s+(\d+)\s*$/gm)) cells[m[1]] = Number(m[2]);
  const sum = (pred: (name: string) => boolean) => Object.entries(cells).filter(([n]) => pred(n)).reduce((s, [, c]) => s + c, 0);
  return {
    luts: cells.SB_LUT4 ?? 0,
    flipFlops: sum((n) => n.startsWith('SB_DFF')),
    carries: cells.SB_CARRY ?? 0,
    blockRams: sum((n) => n.startsWith('SB_RAM')),
    cells,
    log: stdout,
  };
}
