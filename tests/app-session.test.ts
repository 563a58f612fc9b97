// The pure pieces behind the app's jobs: the fast simulation path against the model trace, the session
// recorder against the emulated board's own values, and the ZIP writer read back byte by byte.
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { checkDesign } from '../core/check/checker';
import type { Machine } from '../core/ir/schema';
import { parseStimulusCsv, randomStimulus } from '../core/model/stimulus';
import { simulate } from '../core/model/trace';
import { createEmulator } from '../core/probe/emulator';
import { parseFaultSpec } from '../core/probe/faults';
import { probeLayout } from '../core/probe/layout';
import { FastSimulation, simulateTracks } from '../core/services/fastsim';
import { createSession } from '../core/services/session';
import { dosDateTime, zipStore } from '../core/services/zip';
import { synthesize } from '../core/synth/index';
import { traceToTracks } from '../main/services/tracks';

const dir = path.join(__dirname, '..', 'fixtures');
const designs = readdirSync(dir).filter((f) => f.endsWith('.tsm'));
const load = (file: string): Machine => {
  const r = checkDesign(readFileSync(path.join(dir, file), 'utf8'), file);
  if (!r.machine) throw new Error(`${file} does not check`);
  return r.machine;
};

describe('fast simulation', () => {
  it.each(designs)('%s: random stimulus gives the same change lists as the model trace', (file) => {
    const m = load(file);
    const fast = simulateTracks(m, { kind: 'random', seed: 17 }, 3000);
    expect(fast.cycles).toBe(3000);
    expect(fast.tracks).toEqual(traceToTracks(m, simulate(m, randomStimulus(m, 3000, 17))));
  });

  it.each(designs)('%s: the bundled CSV stimulus, run past its end (rows repeat), matches too', (file) => {
    const m = load(file);
    const csv = parseStimulusCsv(readFileSync(path.join(dir, file.replace(/\.tsm$/, '.csv')), 'utf8'), m);
    if (!csv.ok) throw new Error(`${file}: the CSV does not parse`);
    const cycles = csv.rows.length * 2 + 3;
    expect(simulateTracks(m, { kind: 'rows', rows: csv.rows }, cycles).tracks).toEqual(traceToTracks(m, simulate(m, csv.rows, cycles)));
  });

  it('hands out only what is new on each drain, in pieces that join up to the whole run', () => {
    const m = load('tank_dosing.tsm');
    const sim = new FastSimulation(m, { kind: 'random', seed: 4 }, 1000);
    const joined = sim.meta.map(() => ({ at: [] as number[], values: [] as string[] }));
    while (!sim.finished) {
      expect(sim.run(137)).toBeGreaterThan(0);
      sim.drain().forEach((c, k) => {
        joined[k].at.push(...c.at);
        joined[k].values.push(...c.values);
      });
    }
    expect(sim.run(10)).toBe(0);
    expect(sim.drain().every((c) => c.at.length === 0)).toBe(true);
    expect(sim.tracks().map((t) => ({ at: t.at, values: t.values }))).toEqual(joined);
  });

  it('runs nothing for a design with inputs and no rows', () => {
    const m = load('tank_dosing.tsm');
    expect(simulateTracks(m, { kind: 'rows', rows: [] }, 50)).toMatchObject({ cycles: 0 });
  });
});

function board(spec: string[], seed = 3) {
  const m = load('tank_dosing.tsm');
  const syn = synthesize(m, { encoding: 'gray' });
  if (!syn.ok) throw new Error(syn.error);
  const laid = probeLayout(m, syn.result);
  if (!laid.ok) throw new Error(laid.error);
  const faults = spec.map((s) => {
    const f = parseFaultSpec(s, m);
    if (!f.ok) throw new Error(f.error);
    return f.fault;
  });
  const emu = createEmulator({ machine: m, synthesis: syn.result, layout: laid.layout, random: { seed }, faults });
  if (!emu.ok) throw new Error(emu.error);
  return { m, syn: syn.result, layout: laid.layout, emu: emu.emulator };
}

const valueAt = (t: { at: number[]; values: string[] }, sample: number) => {
  let k = 0;
  while (k + 1 < t.at.length && t.at[k + 1] <= sample) k++;
  return t.values[k];
};

describe('session recorder', () => {
  it('turns frames into board tracks by state name and register value, and expected tracks equal to them when all agree', () => {
    const { m, syn, layout, emu } = board([]);
    const made = createSession({ machine: m, synthesis: syn, layout });
    if (!made.ok) throw new Error(made.error);
    const s = made.session;
    for (let i = 0; i < 20; i++) s.push(emu.produce(333));
    const d = s.drain(0);
    expect(d.divergences).toEqual([]);
    expect(d.counters.cycleFrames).toBeGreaterThan(400);
    expect(s.meta.map((t) => t.name)).toEqual(layout.fields.map((f) => f.source));
    // The trace of the same pins, from the model, is what the board sent.
    const trace = simulate(m, randomStimulus(m, d.counters.cycleFrames, 3));
    const state = s.meta.findIndex((t) => t.group === 'state');
    const poured = s.meta.findIndex((t) => t.name === 'poured');
    for (const row of trace) {
      expect(valueAt(d.tracks[state], row.cycle)).toBe(String(row.state));
      expect(valueAt(d.tracks[poured], row.cycle)).toBe(row.regs[1].toString());
    }
    expect(d.expected[poured]).toEqual(d.tracks[poured]);
    expect(d.expected[0]).toEqual({ at: [], values: [] });
    expect(s.compared).toEqual(layout.fields.map((f) => f.kind !== 'input'));
    const end = s.finish();
    expect(end.summary).toMatch(/^AGREE/);
  });

  it('places each divergence on the frame that shows it, with the expected state filled in', () => {
    const { m, syn, layout, emu } = board(['transition:Prime->Idle@0']);
    const s = createSession({ machine: m, synthesis: syn, layout });
    if (!s.ok) throw new Error(s.error);
    for (let i = 0; i < 30; i++) s.session.push(emu.produce(200));
    const d = s.session.drain(0);
    const stateDivs = d.divergences.filter((v) => v.signal === 'state');
    expect(stateDivs.length).toBeGreaterThan(0);
    const state = s.session.meta.findIndex((t) => t.group === 'state');
    for (const v of stateDivs) {
      expect(v.expectedState).toBe('Pump');
      expect(v.state).toBe('Idle');
      expect(valueAt(d.tracks[state], v.sample)).toBe('0');
      expect(valueAt(d.expected[state]!, v.sample)).toBe('2');
      expect(v.track).toBe(state);
    }
  });

  it('advances the axis over lost frames and stops the waveform at its cap while counting on', () => {
    const { m, syn, layout, emu } = board(['drop:101']);
    const s = createSession({ machine: m, synthesis: syn, layout, maxSamples: 300, maxDivergences: 5 });
    if (!s.ok) throw new Error(s.error);
    for (let i = 0; i < 40; i++) s.session.push(emu.produce(250));
    const d = s.session.drain(0);
    expect(d.counters.drops).toBeGreaterThan(0);
    expect(d.counters.samples).toBe(d.counters.cycleFrames + d.counters.drops);
    expect(d.log.some((l) => l.kind === 'gap')).toBe(true);
    expect(d.capped).toBe(true);
    for (const t of d.tracks) expect(t.at.every((a) => a < 300)).toBe(true);
  });

  it('keeps at most the configured number of divergences in the list', () => {
    const { m, syn, layout, emu } = board(['stuck:poured:2:1']);
    const s = createSession({ machine: m, synthesis: syn, layout, maxDivergences: 7 });
    if (!s.ok) throw new Error(s.error);
    let listed = 0;
    for (let i = 0; i < 50; i++) {
      s.session.push(emu.produce(300));
      listed += s.session.drain(0).divergences.length;
    }
    expect(listed).toBe(7);
    expect(s.session.counters().divergences).toBeGreaterThan(7);
  });

  it('reports a layout that does not belong to the design', () => {
    const { syn, layout } = board([]);
    const other = load('event_stamper.tsm');
    expect(createSession({ machine: other, synthesis: syn, layout })).toMatchObject({ ok: false });
  });
});

/** Reads a stored-entry ZIP back: local headers, central directory and end record must agree. */
function readZip(bytes: Uint8Array) {
  const v = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const end = bytes.length - 22;
  expect(v.getUint32(end, true)).toBe(0x06054b50);
  const count = v.getUint16(end + 10, true);
  let at = v.getUint32(end + 16, true);
  expect(at + v.getUint32(end + 12, true)).toBe(end);
  const out: { name: string; data: Uint8Array; crc: number; time: number; date: number }[] = [];
  for (let i = 0; i < count; i++) {
    expect(v.getUint32(at, true)).toBe(0x02014b50);
    const crc = v.getUint32(at + 16, true);
    const size = v.getUint32(at + 24, true);
    const nameLen = v.getUint16(at + 28, true);
    const local = v.getUint32(at + 42, true);
    const name = new TextDecoder().decode(bytes.subarray(at + 46, at + 46 + nameLen));
    expect(v.getUint32(local, true)).toBe(0x04034b50);
    expect(v.getUint16(local + 8, true)).toBe(0);
    expect(v.getUint32(local + 14, true)).toBe(crc);
    const start = local + 30 + v.getUint16(local + 26, true);
    out.push({ name, data: bytes.subarray(start, start + size), crc, time: v.getUint16(local + 10, true), date: v.getUint16(local + 12, true) });
    at += 46 + nameLen;
  }
  return out;
}

/** CRC-32 bit by bit, independent of the table-driven one the writer uses. */
function crcBitwise(data: Uint8Array): number {
  let c = 0xffffffff;
  for (const b of data) {
    c ^= b;
    for (let k = 0; k < 8; k++) c = c & 1 ? (c >>> 1) ^ 0xedb88320 : c >>> 1;
  }
  return ~c >>> 0;
}

describe('zip writer', () => {
  it('stores every file so that it reads back with matching checksums and names', () => {
    const utf8 = new TextEncoder();
    const files = [
      { name: 'tank_dosing_ctrl.v', data: utf8.encode('module tank_dosing_ctrl;\nendmodule\n') },
      { name: 'empty.v', data: new Uint8Array(0) },
      { name: 'bytes.bin', data: Uint8Array.from({ length: 70_000 }, (_, i) => (i * 31) & 255) },
      { name: 'größe.v', data: utf8.encode('// UTF-8 name\n') },
    ];
    const when = new Date(2031, 4, 17, 13, 45, 30);
    const back = readZip(zipStore(files, when));
    expect(back.map((f) => f.name)).toEqual(files.map((f) => f.name));
    back.forEach((f, i) => {
      expect(Array.from(f.data)).toEqual(Array.from(files[i].data));
      expect(f.crc).toBe(crcBitwise(files[i].data));
      expect({ date: f.date, time: f.time }).toEqual(dosDateTime(when));
    });
    expect(dosDateTime(when)).toEqual({ date: ((2031 - 1980) << 9) | (5 << 5) | 17, time: (13 << 11) | (45 << 5) | 15 });
  });

  it('refuses names that would unpack outside the folder', () => {
    for (const name of ['../x.v', '/etc/x.v', 'a/../../x.v', '']) expect(() => zipStore([{ name, data: new Uint8Array(1) }])).toThrow(/relative file name/);
  });
});
