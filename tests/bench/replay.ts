// Bench for replay: frames decoded and compared per second on a capture of 10 million frames written to a
// temporary file, peak memory while doing it, and the frame rate a 12 Mbaud link could deliver at most for
// the same frame size. Figures are reported, never asserted.
import { rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { captureHeader } from '../../core/capture/header';
import { createComparator } from '../../core/compare/comparator';
import { randomStimulus } from '../../core/model/stimulus';
import { encodeCycleFrame, encodeIdFrame, LAYOUT_VERSION, wireCycleFrameLength } from '../../core/protocol/frame';
import { CaptureWriter, readCaptureFile } from '../../main/serial/capture-file';
import { design, runBoard, concat } from '../compare-frames';

const FRAMES = 10_000_000;
/** One stretch from reset; the capture repeats it, each time after a reset identification frame. */
const BLOCK = 100_000;
const RECORD_BYTES = 64 * 1024;
const LINK_BAUD = 12e6;

/** The probe's bytes for one run of BLOCK cycles from reset (an identification frame every 128 frames). */
function block(): { bytes: Uint8Array; frames: number } {
  const d = design('tank_dosing');
  const cycles = runBoard(d, randomStimulus(d.m, BLOCK, 77));
  const parts: Uint8Array[] = [];
  cycles.forEach((c, k) => {
    if (k % 128 === 0) parts.push(encodeIdFrame({ fingerprint: d.layout.fingerprint, layoutVersion: LAYOUT_VERSION, payloadBits: d.layout.frame.payloadBits, nextCounter: k % 128, afterReset: k === 0 }));
    parts.push(encodeCycleFrame(d.layout.frame, k, c.values));
  });
  return { bytes: concat(parts), frames: cycles.length };
}

export async function benchReplay(): Promise<string> {
  const d = design('tank_dosing');
  const { bytes, frames: perBlock } = block();
  const repeats = Math.ceil(FRAMES / perBlock);
  const file = path.join(tmpdir(), `twinstep-bench-${process.pid}.tscap`);
  rmSync(file, { force: true });
  const lines: string[] = [];
  try {
    const w = CaptureWriter.create(file, captureHeader(d.m, d.layout, { port: 'bench', baud: LINK_BAUD, clockHz: d.m.clockHz }, new Date(), { drive: null, cycles: null }));
    if (!w.ok) throw new Error(w.error);
    for (let r = 0; r < repeats; r++) for (let at = 0; at < bytes.length; at += RECORD_BYTES) w.writer.receivedBytes(bytes.subarray(at, at + RECORD_BYTES));
    w.writer.close('bench');
    const fileBytes = w.writer.bytesReceived;

    const rssBefore = process.memoryUsage().rss;
    let peakRss = rssBefore;
    let records = 0;
    let divergences = 0;
    const made = createComparator({ machine: d.m, synthesis: d.syn, layout: d.layout, onVerdict: (v) => (divergences += v.kind === 'divergence' ? 1 : 0) });
    if (!made.ok) throw new Error(made.error);
    const cmp = made.comparator;
    const cpu0 = process.cpuUsage();
    const t0 = performance.now();
    const read = readCaptureFile(file, {
      header: () => {},
      record: (rec) => {
        if (rec.kind !== 'received') return;
        cmp.push(rec.body);
        // Sample memory now and then (every ~16 MB of stream).
        if (++records % 256 === 0) peakRss = Math.max(peakRss, process.memoryUsage().rss);
      },
      problem: (p) => {
        throw new Error(p.message);
      },
    });
    const wall = (performance.now() - t0) / 1000;
    const cpu = process.cpuUsage(cpu0);
    if (!read.ok) throw new Error(read.error);
    const s = cmp.finish();
    const cpuSeconds = (cpu.user + cpu.system) / 1e6;
    const rate = s.cycleFrames / wall;
    const wire = wireCycleFrameLength(d.layout.frame);
    const lineRate = LINK_BAUD / 10 / wire;
    const maxRssMb = process.resourceUsage().maxRSS / 1024;
    lines.push(
      `replay: ${s.cycleFrames} frames (${(fileBytes / 1e6).toFixed(0)} MB of stream, ${wire}-byte frames, tank_dosing) from a capture file: ` +
        `${(rate / 1e6).toFixed(2)} M frames/s decoded and compared (${wall.toFixed(2)} s wall, ${(s.cycleFrames / cpuSeconds / 1e6).toFixed(2)} M frames per CPU second; goal >= 5 M: ${rate >= 5e6 ? 'met' : 'missed'}); ${s.divergences === 0 && divergences === 0 ? 'no divergence' : `${divergences} divergences (unexpected)`}`,
    );
    lines.push(`replay: memory: RSS ${(rssBefore / 1048576).toFixed(0)} MB before, at most ${(peakRss / 1048576).toFixed(0)} MB while replaying (sampled); process peak (maxRSS, includes building the capture) ${maxRssMb.toFixed(0)} MB`);
    lines.push(`replay: a 12 Mbaud link carries at most 12e6 / 10 / ${wire} = ${Math.round(lineRate)} frames/s of this size; replay runs ${(rate / lineRate).toFixed(1)} times faster`);
  } finally {
    rmSync(file, { force: true });
  }
  return lines.join('\n');
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  benchReplay().then((text) => console.log(text));
}
