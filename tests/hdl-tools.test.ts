// Generated Verilog against outside tools: Icarus Verilog runs the generated self-checking testbench
// (design vs golden model, cycle for cycle), Verilator lints every module, Yosys synthesizes every top
// and proves the equation-style controller equal to the behavioral one.
import { describe, expect, it } from 'vitest';
import { generateHdl } from '../core/hdl/modules';
import { fixtureNames, loadFixture } from './support/load';
import { buildFixture, designFiles, encodingsOf, STYLES, synthFor } from './support/hdl';
import { runIcarus, runYosys, verilatorLint } from './support/tools';

const configs = fixtureNames().flatMap((name) => encodingsOf(loadFixture(name).machine).flatMap((encoding) => STYLES.map((style) => ({ name, encoding, style }))));

describe('Icarus Verilog: generated HDL matches the golden model cycle for cycle', () => {
  for (const c of configs) {
    it(`${c.name}, ${c.encoding}, ${c.style}: fixture stimulus + 1000 random cycles`, () => {
      const b = buildFixture(c.name, c.encoding, c.style, 1000);
      const out = runIcarus(b.files, `tb_${c.name}`);
      const last = out.trim().split('\n').pop();
      expect(last).toBe(`PASS: ${c.name} matches the model for ${b.trace.length} cycles (state, ${b.machine.registers.length} registers, ${b.machine.outputs.length} outputs)`);
      expect(b.trace.length).toBeGreaterThanOrEqual(1000);
    });
  }
});

describe('Verilator --lint-only -Wall: no warnings on any generated module', () => {
  for (const c of configs) {
    it(`${c.name}, ${c.encoding}, ${c.style}`, () => {
      const b = buildFixture(c.name, c.encoding, c.style, 0);
      expect(verilatorLint(designFiles(b), b.hdl.names.top)).toBe('');
    });
  }
});

describe('Yosys: every generated top synthesizes (synth and synth_ice40)', () => {
  for (const c of configs) {
    it(`${c.name}, ${c.encoding}, ${c.style}`, () => {
      const b = buildFixture(c.name, c.encoding, c.style, 0);
      const files = designFiles(b);
      const read = `read_verilog ${Object.keys(files).join(' ')}`;
      const generic = runYosys(files, `${read}; synth -top ${b.hdl.names.top}; stat`);
      expect(generic).toMatch(/Number of cells:\s+\d+/);
      const ice = runYosys(files, `${read}; synth_ice40 -top ${b.hdl.names.top}; stat`);
      expect(Number(/SB_LUT4\s+(\d+)/.exec(ice)?.[1] ?? 0)).toBeGreaterThan(0);
      // No vendor primitives in the source: the generic flow must leave only Yosys's own cells.
      expect(generic).not.toMatch(/SB_/);
    });
  }
});

/** Yosys SAT proof (k-induction) that `gate` equals `gold` wherever gold is not 'x'. */
function proveControllers(goldText: string, gateText: string): { proven: boolean; log: string } {
  const script = [
    'read_verilog gold.v gate.v',
    'proc',
    'async2sync',
    'miter -equiv -ignore_gold_x -make_assert -flatten gold gate miter',
    'hierarchy -top miter',
    'sat -verify -tempinduct -maxsteps 6 -prove-asserts -enable_undef -set-init-undef -set-def-inputs miter',
  ].join('; ');
  try {
    return { proven: true, log: runYosys({ 'gold.v': goldText, 'gate.v': gateText }, script) };
  } catch (e) {
    return { proven: false, log: (e as Error).message };
  }
}

describe('Yosys equivalence: equations controller = behavioral controller (up to table don\'t-cares)', () => {
  const pairs = fixtureNames().flatMap((name) => encodingsOf(loadFixture(name).machine).map((encoding) => ({ name, encoding })));
  for (const p of pairs) {
    it(`${p.name}, ${p.encoding}`, () => {
      const { machine } = loadFixture(p.name);
      const syn = synthFor(machine, p.encoding);
      const gold = generateHdl(machine, syn, { controller: 'behavioral', reset: 'low', dontCareAsX: true }).files[0].text.replace(`module ${machine.name}_ctrl`, 'module gold');
      const gate = generateHdl(machine, syn, { controller: 'equations', reset: 'low' }).files[0].text.replace(`module ${machine.name}_ctrl`, 'module gate');
      const zero = generateHdl(machine, syn, { controller: 'behavioral', reset: 'low' }).files[0].text.replace(`module ${machine.name}_ctrl`, 'module gate');
      const eq = proveControllers(gold, gate);
      expect(eq.proven, eq.log.slice(-2000)).toBe(true);
      expect(eq.log).toMatch(/Induction step proven: SUCCESS!/);
      // The shipped behavioral controller (don't-cares resolved to 0) refines the same specification.
      expect(proveControllers(gold, zero).proven).toBe(true);
    });
  }

  it('the proof can fail: one product term removed from a next-state equation is found', () => {
    const { machine } = loadFixture('bottle_capper');
    const syn = synthFor(machine, 'binary');
    const gold = generateHdl(machine, syn, { controller: 'behavioral', reset: 'low', dontCareAsX: true }).files[0].text.replace(`module ${machine.name}_ctrl`, 'module gold');
    const gate = generateHdl(machine, syn, { controller: 'equations', reset: 'low' }).files[0].text.replace(`module ${machine.name}_ctrl`, 'module gate');
    const mutated = gate.replace(/(assign state_eq\[0\] = )\([^)]*\) \| /, '$1');
    expect(mutated).not.toBe(gate);
    expect(proveControllers(gold, mutated).proven).toBe(false);
  });
});

describe('Icarus Verilog: random machines through synthesis and generation', () => {
  it('40 random well-typed machines, every encoding, both controller styles, 300 random cycles each', async () => {
    const { randomMachine } = await import('./support/random-machine');
    const { randomStimulus } = await import('../core/model/stimulus');
    const { simulate } = await import('../core/model/trace');
    const { generateTestbench } = await import('../core/hdl/testbench');
    const { synthesize } = await import('../core/synth/index');
    const files: Record<string, string> = {};
    const tops: string[] = [];
    for (let seed = 0; seed < 40; seed++) {
      const m = { ...randomMachine(5000 + seed, { maxStates: 6, depth: 2 }) };
      const encoding = (['binary', 'gray', 'onehot'] as const)[seed % 3];
      const controller = seed % 2 ? 'equations' : 'behavioral';
      m.name = `rnd${seed}`;
      const syn = synthesize(m, { encoding });
      expect(syn.ok, syn.ok ? '' : syn.error).toBe(true);
      if (!syn.ok) continue;
      const hdl = generateHdl(m, syn.result, { controller, reset: 'low' });
      const rows = randomStimulus(m, 300, seed);
      const tb = generateTestbench(m, hdl.names, rows, simulate(m, rows));
      for (const f of [...hdl.files, tb]) files[f.name] = f.text;
      tops.push(m.name);
    }
    // One simulation run per machine keeps iverilog's start-up cost down.
    for (const name of tops) {
      const own = Object.fromEntries(Object.entries(files).filter(([f]) => f.startsWith(`${name}_`) || f === `tb_${name}.v`));
      const out = runIcarus(own, `tb_${name}`);
      expect(out.trim().split('\n').pop(), name).toMatch(/^PASS: /);
    }
  });
});
