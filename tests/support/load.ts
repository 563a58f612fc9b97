// Test helpers: load a fixture design and its stimulus, failing loudly on any diagnostic.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { checkDesign } from '../../core/check/checker';
import type { Machine } from '../../core/ir/schema';
import { parseStimulusCsv } from '../../core/model/stimulus';
import { formatDiagnostic } from '../../core/util/diagnostic';

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
export const FIXTURES = path.join(ROOT, 'fixtures');

export function fixtureNames(): string[] {
  return ['tank_dosing', 'trim_servo', 'bottle_capper', 'event_stamper', 'link_scrambler'];
}

export function loadFixture(name: string): { machine: Machine; rows: bigint[][]; text: string } {
  const file = path.join(FIXTURES, `${name}.tsm`);
  const text = readFileSync(file, 'utf8');
  const r = checkDesign(text, file);
  if (!r.machine) throw new Error(r.diagnostics.map((d) => formatDiagnostic(file, d)).join('\n'));
  const s = parseStimulusCsv(readFileSync(path.join(FIXTURES, `${name}.csv`), 'utf8'), r.machine);
  if (!s.ok) throw new Error(s.diagnostics.map((d) => formatDiagnostic(`${name}.csv`, d)).join('\n'));
  return { machine: r.machine, rows: s.rows, text };
}

export function checkText(text: string) {
  return checkDesign(text, 'test.tsm');
}
