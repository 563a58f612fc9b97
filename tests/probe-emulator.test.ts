// The board emulator: its frames against the golden model (simulate) and the reference expression evaluator,
// host commands, and each fault showing up exactly where it was injected; the line model against a bound
// worked out by hand below.
import { describe, expect, it } from 'vitest';
import { synthesize } from '../core/synth/index';
import type { Synthesis } from '../core/synth/schema';
import type { Machine } from '../core/ir/schema';
import { evalExpr } from '../core/ir/eval';
import { simulate } from '../core/model/trace';
import { randomStimulus } from '../core/model/stimulus';
import { probeLayout, type ProbeLayout } from '../core/probe/layout';
import { BoardEmulator, createEmulator } from '../core/probe/emulator';
import { parseFaultSpec, parseFaultList, formatFault, type Fault } from '../core/probe/faults';
import { UartResampler } from '../core/probe/line';
import { FrameDecoder, type DecodedEvent } from '../core/protocol/decoder';
import { encodeCommands, type HostCommand } from '../core/protocol/commands';
import { fixtureNames, loadFixture } from './support/load';

type Design = { machine: Machine; rows: bigint[][]; syn: Synthesis; layout: ProbeLayout };

function design(name: string): Design {
  const { machine, rows } = loadFixture(name);
  const s = synthesize(machine, { encoding: 'binary' });
  if (!s.ok) throw new Error(s.error);
  const l = probeLayout(machine, s.result);
  if (!l.ok) throw new Error(l.error);
  return { machine, rows, syn: s.result, layout: l.layout };
}

/** What each cycle frame must carry, from the golden model's trace and the reference evaluator. */
function expectedFrames(d: Design, rows: bigint[][], cycles = rows.length): bigint[][] {
  const { machine: m, syn } = d;
  return simulate(m, rows, cycles).map((t) => {
    const env = { input: (n: string) => t.inputs[m.inputs.findIndex((i) => i.name === n)], reg: (n: string) => t.regs[m.registers.findIndex((r) => r.name === n)] };
    return [
      ...t.inputs,
      BigInt(parseInt(syn.encoding.codes[t.state], 2)),
      ...t.regs,
      ...syn.datapath.statusSignals.map((s) => evalExpr(s.expr, env)),
      ...m.outputs.flatMap((o, i) => (o.type.width === 1 ? [t.outputs[i]] : [])),
    ];
  });
}

function decodeAll(d: Design, bytes: Uint8Array): { events: DecodedEvent[]; decoder: FrameDecoder } {
  const decoder = new FrameDecoder(d.layout.frame, { expectedFingerprint: d.layout.fingerprint });
  return { events: decoder.push(bytes), decoder };
}

const cycleValues = (events: DecodedEvent[]) => events.flatMap((e) => (e.kind === 'cycle' ? [e.values] : []));

describe('board emulator, pins from a stimulus', () => {
  for (const name of fixtureNames()) {
    it(`${name}: one frame per cycle, equal to the golden model, id frame first`, () => {
      const d = design(name);
      const emu = new BoardEmulator({ machine: d.machine, synthesis: d.syn, layout: d.layout, stimulus: d.rows });
      const bytes = emu.produce(1 << 30);
      expect(emu.finished).toBe(true);
      expect(emu.cycle).toBe(d.rows.length);
      const { events, decoder } = decodeAll(d, bytes);
      expect(events[0]).toMatchObject({ kind: 'id', info: { afterReset: true, nextCounter: 0, fingerprint: d.layout.fingerprint } });
      expect(cycleValues(events)).toEqual(expectedFrames(d, d.rows));
      expect(decoder.stats).toMatchObject({ crcErrors: 0, framingErrors: 0, droppedFrames: 0, idMismatches: 0 });
    });
  }

  it('random pins follow randomStimulus with the same seed; id frames every 128 cycle frames', () => {
    const d = design('bottle_capper');
    const emu = new BoardEmulator({ machine: d.machine, synthesis: d.syn, random: { seed: 42 } });
    const bytes = emu.produce(1 << 30, 300);
    expect(emu.cyclesRun).toBe(300);
    const { events } = decodeAll(d, bytes);
    expect(cycleValues(events)).toEqual(expectedFrames(d, randomStimulus(d.machine, 300, 42)));
    // docs/probe-protocol.md: an id frame before the first frame after reset and before each counter-0 frame.
    const idAt = events.flatMap((e, i) => (e.kind === 'id' ? [events.slice(0, i).filter((x) => x.kind === 'cycle').length] : []));
    expect(idAt).toEqual([0, 128, 256]);
  });

  it('produce returns at most maxBytes and keeps the rest queued, so chunked output equals one-shot output', () => {
    const d = design('tank_dosing');
    const whole = new BoardEmulator({ machine: d.machine, synthesis: d.syn, stimulus: d.rows }).produce(1 << 20);
    const emu = new BoardEmulator({ machine: d.machine, synthesis: d.syn, stimulus: d.rows });
    const parts: number[] = [];
    for (let n = 1; !emu.finished || parts.length < whole.length; n = (n % 13) + 1) {
      const chunk = emu.produce(n);
      expect(chunk.length).toBeLessThanOrEqual(n);
      if (chunk.length === 0) break;
      parts.push(...chunk);
    }
    expect(parts).toEqual([...whole]);
  });
});

describe('board emulator, host commands', () => {
  const d = design('tank_dosing');
  const send = (emu: BoardEmulator, cmds: HostCommand[]) => emu.receive(encodeCommands(cmds, emu.vector));

  it('halt stops frames, step N gives exactly N, run resumes', () => {
    const emu = new BoardEmulator({ machine: d.machine, synthesis: d.syn, random: { seed: 3 }, startHalted: true });
    expect(emu.produce(1000).length).toBe(0);
    send(emu, [{ kind: 'step', cycles: 5 }]);
    let frames = cycleValues(decodeAll(d, emu.produce(100000)).events);
    expect(frames.length).toBe(5);
    expect(emu.halted).toBe(true);
    send(emu, [{ kind: 'run' }]);
    emu.produce(1000);
    expect(emu.cycle).toBeGreaterThan(5);
    send(emu, [{ kind: 'halt' }]);
    const at = emu.cycle;
    emu.produce(1000);
    expect(emu.cycle).toBe(at);
    // Step replaces the pending count rather than adding to it.
    send(emu, [{ kind: 'step', cycles: 9 }, { kind: 'step', cycles: 2 }]);
    frames = cycleValues(decodeAll(d, emu.produce(100000)).events);
    expect(emu.cycle).toBe(at + 2);
  });

  it('host inputs drive the design and appear in the frames; reset restarts at cycle 0 in the reset state', () => {
    const emu = new BoardEmulator({ machine: d.machine, synthesis: d.syn, startHalted: true });
    const rows = d.rows.slice(0, 10);
    const cmds: HostCommand[] = [{ kind: 'host-inputs', on: true }];
    for (const r of rows) cmds.push({ kind: 'inputs', values: r }, { kind: 'step', cycles: 1 });
    let bytes: number[] = [];
    send(emu, cmds.slice(0, 1));
    for (let k = 0; k < rows.length; k++) {
      send(emu, cmds.slice(1 + 2 * k, 3 + 2 * k));
      bytes.push(...emu.produce(1 << 20));
    }
    expect(cycleValues(decodeAll(d, Uint8Array.from(bytes)).events)).toEqual(expectedFrames(d, rows));
    // Reset, then three more cycles with the last inputs still in force.
    send(emu, [{ kind: 'reset' }, { kind: 'step', cycles: 3 }]);
    bytes = [...emu.produce(1 << 20)];
    const { events } = decodeAll(d, Uint8Array.from(bytes));
    expect(events[0]).toMatchObject({ kind: 'id', info: { afterReset: true, nextCounter: 0 } });
    expect(events.filter((e) => e.kind === 'cycle').map((e) => (e.kind === 'cycle' ? e.counter : -1))).toEqual([0, 1, 2]);
    const last = rows[rows.length - 1];
    expect(cycleValues(events)).toEqual(expectedFrames(d, [last, last, last]));
  });

  it('turning host inputs off goes back to the pins, which kept advancing one row per cycle', () => {
    const emu = new BoardEmulator({ machine: d.machine, synthesis: d.syn, stimulus: d.rows, startHalted: true });
    send(emu, [{ kind: 'host-inputs', on: true }, { kind: 'inputs', values: [0n, 0n, 0n, 0n] }, { kind: 'step', cycles: 4 }]);
    emu.produce(1 << 20);
    send(emu, [{ kind: 'host-inputs', on: false }, { kind: 'step', cycles: 1 }]);
    const frames = cycleValues(decodeAll(d, emu.produce(1 << 20)).events);
    expect(frames[0].slice(0, 4)).toEqual(d.rows[4]);
  });
});

describe('fault injection', () => {
  const d = design('tank_dosing');
  const clean = () => cycleValues(decodeAll(d, new BoardEmulator({ machine: d.machine, synthesis: d.syn, random: { seed: 11 } }).produce(1 << 30, 400)).events);
  const faulty = (faults: Fault[]) => {
    const emu = new BoardEmulator({ machine: d.machine, synthesis: d.syn, random: { seed: 11 }, faults });
    return decodeAll(d, emu.produce(1 << 30, 400));
  };
  const regField = (name: string) => d.layout.fields.findIndex((f) => f.name === `reg.${name}`);

  it('a stuck register bit shows in every frame from its cycle on, and nothing differs before', () => {
    const ref = clean();
    const r = parseFaultSpec('stuck:runs:0:1@150', d.machine);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const got = cycleValues(faulty([r.fault]).events);
    const f = regField('runs');
    expect(got.slice(0, 150)).toEqual(ref.slice(0, 150));
    for (let k = 150; k < got.length; k++) expect(got[k][f] & 1n).toBe(1n);
    // The first visible difference is the first cycle from 150 on where the clean run has that bit clear.
    const firstClear = ref.findIndex((v, k) => k >= 150 && (v[f] & 1n) === 0n);
    const firstDiff = got.findIndex((v, k) => JSON.stringify(v, (_, x) => (typeof x === 'bigint' ? x.toString() : x)) !== JSON.stringify(ref[k], (_, x) => (typeof x === 'bigint' ? x.toString() : x)));
    expect(firstDiff).toBe(firstClear);
  });

  it('a wrong transition: the state after the first cycle in that state from the given cycle on is the target', () => {
    const ref = clean();
    const sf = d.layout.fields.findIndex((f) => f.kind === 'state');
    const code = (s: string) => BigInt(d.layout.stateCodes[d.machine.states.findIndex((x) => x.name === s)]);
    const got = cycleValues(faulty([{ kind: 'transition', state: 'Pump', to: 'Finish', from: 60 }]).events);
    const k = ref.findIndex((v, i) => i >= 60 && v[sf] === code('Pump'));
    expect(k).toBeGreaterThan(0);
    expect(got.slice(0, k + 1)).toEqual(ref.slice(0, k + 1));
    expect(got[k + 1][sf]).toBe(code('Finish'));
  });

  it('dropped bytes: the decoder loses exactly the frames that contained one, and counts them', () => {
    const emuClean = new BoardEmulator({ machine: d.machine, synthesis: d.syn, random: { seed: 11 } });
    const stream = emuClean.produce(1 << 30, 400);
    const { events, decoder } = faulty([{ kind: 'drop', every: 97 }]);
    // Independent bookkeeping: split the clean stream at its delimiters; a frame survives if none of its bytes
    // (delimiter included) is a multiple-of-97th byte, and the frame before it kept its delimiter.
    const frames: { counter: number | null; start: number; end: number }[] = [];
    let s = 0;
    for (let i = 0; i < stream.length; i++) {
      if (stream[i] !== 0) continue;
      // The raw frame's byte 0 is the header. COBS code byte 1 means that byte is 0 (counter 0); otherwise
      // it is the byte right after the code byte.
      const header = stream[s] === 1 ? 0 : stream[s + 1];
      frames.push({ counter: header & 0x80 ? null : header, start: s, end: i });
      s = i + 1;
    }
    const hit = (a: number, b: number) => Math.floor((b + 1) / 97) > Math.floor(a / 97);
    const survivors = frames.filter((f, i) => !hit(f.start, f.end) && (i === 0 || (stream[frames[i - 1].end] === 0 && (frames[i - 1].end + 1) % 97 !== 0)));
    const received = events.flatMap((e) => (e.kind === 'cycle' ? [e.counter] : []));
    expect(received).toEqual(survivors.filter((f) => f.counter !== null).map((f) => f.counter));
    const lastSurvivor = survivors.at(-1)!;
    const lostBefore = frames.filter((f) => f.counter !== null && f.end < lastSurvivor.end && !survivors.includes(f)).length;
    expect(decoder.stats.droppedFrames).toBe(lostBefore);
    expect(decoder.stats.framingErrors + decoder.stats.crcErrors).toBeGreaterThan(0);
  });

  it('baud noise: within the receiver bound the bytes are untouched, beyond it CRC/framing errors, never a crash', () => {
    // Bound worked out by hand: the stop bit is sampled (9.5 + delay) / ratio sender bits after the start edge,
    // delay < 1/16 receiver bit; it must land in [9, 10): ratio in (9.5625/10, 9.5/9] = (0.956, 1.055].
    const ref = new BoardEmulator({ machine: d.machine, synthesis: d.syn, random: { seed: 11 } }).produce(1 << 30, 400);
    for (const ratio of [0.96, 1, 1.02, 1.05]) {
      const emu = new BoardEmulator({ machine: d.machine, synthesis: d.syn, random: { seed: 11 }, faults: [{ kind: 'baud', ratio, seed: 5 }] });
      expect([...emu.produce(1 << 30, 400)], `ratio ${ratio}`).toEqual([...ref]);
    }
    for (const ratio of [0.9, 0.95, 1.07, 1.2]) {
      const emu = new BoardEmulator({ machine: d.machine, synthesis: d.syn, random: { seed: 11 }, faults: [{ kind: 'baud', ratio, seed: 5 }] });
      const { decoder } = decodeAll(d, emu.produce(1 << 30, 400));
      expect(decoder.stats.crcErrors + decoder.stats.framingErrors, `ratio ${ratio}`).toBeGreaterThan(0);
      expect(decoder.stats.cycleFrames).toBeLessThan(400);
    }
  });

  it('the line model samples a lone character as a slow receiver would (worked by hand)', () => {
    // 0x55 sent once: line positions 0..9 = 0 (start), 1 0 1 0 1 0 1 0 (LSB first), 1 (stop). A receiver at
    // 0.9 of the rate samples at (j + 0.5) / 0.9 = 0.56, 1.67, 2.78, 3.89, 5.0, 6.11, 7.22, 8.33, 9.44, 10.56
    // (+ a delay under 0.07): data bits read positions 1,2,3,5,6,7,8,9 = 1,0,1,1,0,1,0,1 (position 4 is
    // skipped, position 9 is the stop bit) and the stop sample lands on the idle line (1): 0b10101101 = 0xAD.
    const r = new UartResampler(0.9, 1);
    expect([...r.push(Uint8Array.of(0x55)), ...r.idle()]).toEqual([0xad]);
  });
});

describe('fault specs and bad options', () => {
  const d = design('tank_dosing');
  it('parses and formats the documented forms', () => {
    for (const spec of ['stuck:poured:3:1@40', 'transition:Pump->Idle@25', 'drop:500', 'baud:1.07:9']) {
      const r = parseFaultSpec(spec, d.machine);
      expect(r.ok, spec).toBe(true);
      if (r.ok) expect(formatFault(r.fault)).toBe(spec);
    }
    expect(parseFaultList('drop:9, baud:1.1', d.machine)).toEqual({ ok: true, faults: [{ kind: 'drop', every: 9 }, { kind: 'baud', ratio: 1.1, seed: 1 }] });
  });

  it('names the spec and the problem', () => {
    const cases: [string, RegExp][] = [
      ['stuck:nosuch:0:1', /'nosuch' is not a register of tank_dosing/],
      ['stuck:poured:8:1', /bit '8' is not a bit of poured \(0 to 7\)/],
      ['stuck:poured:1:2', /must be 0 or 1/],
      ['stuck:poured:1:1@x', /not a cycle number/],
      ['transition:Pump-Idle', /expected transition:STATE->TARGET/],
      ['transition:Pump->Nowhere', /'Nowhere' is not a state/],
      ['drop:1', /at least 2/],
      ['baud:3', /from 0.5 to 2/],
      ['baud:1.1:x', /seed 'x'/],
      ['sparks:1', /unknown fault kind 'sparks'/],
    ];
    for (const [spec, re] of cases) {
      const r = parseFaultSpec(spec, d.machine);
      expect(r.ok, spec).toBe(false);
      if (!r.ok) {
        expect(r.error).toContain(`fault '${spec}'`);
        expect(r.error).toMatch(re);
      }
    }
  });

  it('produce(Infinity) runs until halted, and refuses a free run that would never end', () => {
    const emu = new BoardEmulator({ machine: d.machine, synthesis: d.syn, random: { seed: 1 }, startHalted: true });
    emu.receive(encodeCommands([{ kind: 'step', cycles: 7 }], emu.vector));
    emu.produce(Infinity);
    expect(emu.cycle).toBe(7);
    emu.receive(encodeCommands([{ kind: 'run' }], emu.vector));
    expect(() => emu.produce(Infinity)).toThrow(/never return; give maxCycles/);
    emu.produce(Infinity, 5);
    expect(emu.cycle).toBe(12);
  });

  it('bad emulator options give a message, not a crash', () => {
    const bad = [
      { stimulus: [[1n, 0n]] },
      { stimulus: [[2n, 0n, 0n, 0n]] },
      { stimulus: d.rows, random: { seed: 1 } },
      { faults: [{ kind: 'stuck', register: 'runs', bit: 16, value: 1, from: 0 } as Fault] },
    ];
    for (const extra of bad) {
      const r = createEmulator({ machine: d.machine, synthesis: d.syn, ...extra });
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.error).toMatch(/^board emulator: /);
    }
  });
});
