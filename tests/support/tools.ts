// Outside tools used by tests (Icarus Verilog, Verilator, Yosys, socat). A missing tool is an error
// with the install hint, never a silent skip.
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

export function requireTool(name: string): void {
  const r = spawnSync('sh', ['-c', `command -v ${name}`]);
  const pkg: Record<string, string> = { vvp: 'iverilog', vcd2fst: 'gtkwave', fst2vcd: 'gtkwave' };
  if (r.status !== 0) throw new Error(`outside tool '${name}' is not installed; on Debian: apt-get install ${pkg[name] ?? name}`);
}

export function tempDir(prefix: string): string {
  return mkdtempSync(path.join(tmpdir(), `twinstep-${prefix}-`));
}

/** Compiles and runs Verilog files with Icarus Verilog; returns vvp's standard output. */
export function runIcarus(files: Record<string, string>, top: string, opts: { timeoutMs?: number } = {}): string {
  requireTool('iverilog');
  requireTool('vvp');
  const dir = tempDir('iv');
  const names = Object.keys(files);
  for (const f of names) writeFileSync(path.join(dir, f), files[f]);
  execFileSync('iverilog', ['-g2001', '-Wall', '-s', top, '-o', path.join(dir, 'sim.vvp'), ...names.map((f) => path.join(dir, f))], { stdio: 'pipe', timeout: opts.timeoutMs ?? 120_000 });
  return execFileSync('vvp', ['-n', path.join(dir, 'sim.vvp')], { encoding: 'utf8', timeout: opts.timeoutMs ?? 300_000, maxBuffer: 256 * 1024 * 1024 });
}

/** Verilator lint; returns its warnings and errors (empty when clean). */
export function verilatorLint(files: Record<string, string>, top: string): string {
  requireTool('verilator');
  const dir = tempDir('vl');
  const names = Object.keys(files);
  for (const f of names) writeFileSync(path.join(dir, f), files[f]);
  const r = spawnSync('verilator', ['--lint-only', '-Wall', '--top-module', top, ...names.map((f) => path.join(dir, f))], { encoding: 'utf8', cwd: dir });
  return (r.stdout + r.stderr).trim();
}

/** Runs Yosys on a script with the given files in a temp directory; throws with the log on failure. */
export function runYosys(files: Record<string, string>, script: string): string {
  requireTool('yosys');
  const dir = tempDir('ys');
  for (const [f, text] of Object.entries(files)) writeFileSync(path.join(dir, f), text);
  const r = spawnSync('yosys', ['-q', '-l', path.join(dir, 'yosys.log'), '-p', script], { encoding: 'utf8', cwd: dir, maxBuffer: 64 * 1024 * 1024 });
  if (r.status !== 0) throw new Error(`yosys failed:\n${r.stdout}\n${r.stderr}`);
  return execFileSync('cat', [path.join(dir, 'yosys.log')], { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
}
