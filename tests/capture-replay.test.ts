// `twinstep replay` on capture files written by the recorder: the verdicts are those of the injected faults,
// identical to a direct comparison of the same bytes; bad files give exit status 2 and a message.
import { readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { captureHeader } from '../core/capture/header';
import { randomStimulus } from '../core/model/stimulus';
import { formatStimulusCsv } from '../core/model/stimulus';
import { CaptureWriter } from '../main/serial/capture-file';
import { compare, design, probeStream, runBoard, type Design } from './compare-frames';
import { cli } from './support/cli';
import { FIXTURES } from './support/load';
import { tempDir } from './support/tools';

/** Record `stream` as the monitor would: one record per arrival, here in chunks of `chunk` bytes. */
function record(file: string, d: Design, stream: Uint8Array, chunk = 97, close = true): void {
  const h = captureHeader(d.m, d.layout, { port: '/dev/pts/test', baud: 115200, clockHz: d.m.clockHz }, new Date(), { drive: null, cycles: null });
  const w = CaptureWriter.create(file, h);
  if (!w.ok) throw new Error(w.error);
  for (let at = 0; at < stream.length; at += chunk) w.writer.receivedBytes(stream.subarray(at, at + chunk));
  if (close) w.writer.close('test');
}

const parseLines = (out: string) => out.trim().split('\n').filter(Boolean).map((l) => JSON.parse(l));

describe('twinstep replay', () => {
  const d = design('tank_dosing');
  const rows = randomStimulus(d.m, 1500, 21);
  const pump = d.m.states.findIndex((s) => s.name === 'Pump');
  const at = runBoard(d, rows).findIndex((c, k) => k > 200 && c.state === pump && c.computedNext !== 0);
  const board = runBoard(d, rows, [{ kind: 'jump', at, to: 0 }, { kind: 'stuck', reg: 'target', bit: 7, value: 1, from: 900 }]);
  const stream = probeStream(d.layout, board, { drop: new Set([600, 601]) });
  const designFile = path.join(FIXTURES, 'tank_dosing.tsm');

  it('reports the injected faults with exit status 3, verdicts identical to comparing the bytes directly', async () => {
    const dir = tempDir('replay');
    const file = path.join(dir, 'run.tscap');
    record(file, d, stream);
    const r = await cli(['replay', file, '--design', designFile, '--json']);
    expect(r.err).toBe('');
    expect(r.code).toBe(3);
    const lines = parseLines(r.out);
    const verdicts = lines.filter((l) => l.kind !== 'capture');
    expect(verdicts).toEqual(JSON.parse(JSON.stringify(compare(d, stream))));
    const ds = verdicts.filter((v) => v.kind === 'divergence');
    // The wrong transition shows in the frame after it, on the state.
    expect(ds[0]).toMatchObject({ cycle: at + 1, signal: 'state', actual: 'Idle' });
    // The stuck bit: target is loaded from dose, and a frame from cycle 900 on shows bit 7 set where the model does not.
    expect(ds.some((v) => v.signal === 'reg.target' && v.cycle >= 900 && v.differingBits.includes(7))).toBe(true);
    expect(verdicts.filter((v) => v.kind === 'gap')).toMatchObject([{ cycle: 600, missing: 2 }]);
    expect(lines.at(-1)).toMatchObject({ kind: 'capture', truncated: false, end: { reason: 'test' } });
  });

  it('prints text verdicts and a summary, exit 0 for a faithful board', async () => {
    const dir = tempDir('replay');
    const file = path.join(dir, 'good.tscap');
    record(file, d, probeStream(d.layout, runBoard(d, rows)));
    const r = await cli(['replay', file, '--design', designFile]);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^AGREE: 1500 cycle frames \(1500 compared\), 0 divergences/m);
  });

  it('replays a capture cut off mid-record (recorder killed): everything before the cut, a warning, no end record', async () => {
    const dir = tempDir('replay');
    const file = path.join(dir, 'cut.tscap');
    record(file, d, stream, 200, false);
    const bytes = readFileSync(file);
    const cutFile = path.join(dir, 'cut2.tscap');
    const cut = bytes.length - 50;
    writeFileSync(cutFile, bytes.subarray(0, cut));
    const r = await cli(['replay', cutFile, '--design', designFile, '--json']);
    expect(r.code).toBe(3);
    const lines = parseLines(r.out);
    expect(lines.find((l) => l.kind === 'capture-problem')?.message).toMatch(/ends inside a record/);
    expect(lines.at(-1)).toMatchObject({ kind: 'capture', truncated: true, end: null });
    // The records are 200 stream bytes each and the cut loses the last (partial) one: the replay saw the
    // stream up to the last 200-byte boundary before the cut.
    const recordBytes = 17 + 200;
    const headerBytes = bytes.length - Math.ceil(stream.length / 200) * 17 - stream.length;
    const complete = Math.floor((cut - headerBytes) / recordBytes);
    const seen = stream.subarray(0, complete * 200);
    const verdicts = lines.filter((l) => l.kind !== 'capture' && l.kind !== 'capture-problem');
    expect(verdicts).toEqual(JSON.parse(JSON.stringify(compare(d, seen))));
  });

  it('exit status 2 with a message for a file that is not a capture', async () => {
    const dir = tempDir('replay');
    const file = path.join(dir, 'stim.csv');
    writeFileSync(file, formatStimulusCsv(d.m, rows.slice(0, 3)));
    const r = await cli(['replay', file, '--design', designFile]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/not a Twinstep capture/);
  });

  it('exit status 2 when the capture was made with another state encoding than the one given', async () => {
    const dir = tempDir('replay');
    const file = path.join(dir, 'gray.tscap');
    const g = design('tank_dosing', 'gray');
    record(file, g, probeStream(g.layout, runBoard(g, rows.slice(0, 50))));
    // The header says gray; replaying with it agrees, forcing one-hot cannot decode the frames.
    expect((await cli(['replay', file, '--design', designFile])).code).toBe(0);
    const r = await cli(['replay', file, '--design', designFile, '--encoding', 'onehot']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/frame layout .* is not this design's .*--encoding/);
  });

  it('exit status 2 for a missing file or missing options', async () => {
    expect((await cli(['replay', '/nonexistent/x.tscap', '--design', designFile])).err).toMatch(/no such file/);
    const r = await cli(['replay', 'x.tscap']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--design FILE.tsm is required/);
  });
});
