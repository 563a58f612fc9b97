// Model speed: simulated cycles per second for the interpreter and the compiled model on each demo
// design, one core. Inputs come from a pre-generated ring of random rows so generation is not timed.
import { compileModel, toRep, type RepValue } from '../../core/model/compiled';
import { interpreter } from '../../core/model/interpreter';
import { randomStimulus } from '../../core/model/stimulus';
import { fixtureNames, loadFixture } from '../support/load';

const RING = 4096;

export async function benchModel(cyclesCompiled = 10_000_000, cyclesInterp = 10_000_000): Promise<string> {
  const lines = ['Model speed (cycles per second, one core)', `  ${'design'.padEnd(16)} ${'states'.padStart(6)} ${'interpreter'.padStart(14)} ${'compiled'.padStart(14)}  cycles`];
  let largest = { name: '', states: 0, rate: 0 };
  for (const name of fixtureNames()) {
    const { machine: m } = loadFixture(name);
    const rows = randomStimulus(m, RING, 11);
    const repRows = rows.map((r) => r.map((v, k) => toRep(v, m.inputs[k].type.width)));
    const model = compileModel(m);
    const out: RepValue[] = new Array(m.outputs.length);
    for (let c = 0; c < 200_000; c++) model.step(repRows[c & (RING - 1)], out); // warm-up for the JIT
    model.reset();
    let t0 = performance.now();
    for (let c = 0; c < cyclesCompiled; c++) model.step(repRows[c & (RING - 1)], out);
    const compiledRate = cyclesCompiled / ((performance.now() - t0) / 1000);
    const interp = interpreter(m);
    let s = interp.reset();
    t0 = performance.now();
    for (let c = 0; c < cyclesInterp; c++) s = interp.step(s, rows[c & (RING - 1)]).next;
    const interpRate = cyclesInterp / ((performance.now() - t0) / 1000);
    lines.push(`  ${name.padEnd(16)} ${String(m.states.length).padStart(6)} ${fmt(interpRate).padStart(14)} ${fmt(compiledRate).padStart(14)}  ${cyclesInterp.toLocaleString('en')} / ${cyclesCompiled.toLocaleString('en')}`);
    if (m.states.length > largest.states) largest = { name, states: m.states.length, rate: compiledRate };
  }
  lines.push(`  goal: compiled >= 20 M cycles/s on the largest design (${largest.name}, ${largest.states} states): ${fmt(largest.rate)} -> ${largest.rate >= 20e6 ? 'met' : 'NOT met'}`);
  return lines.join('\n');
}

function fmt(rate: number): string {
  return rate >= 1e6 ? `${(rate / 1e6).toFixed(1)} M/s` : `${(rate / 1e3).toFixed(0)} k/s`;
}
