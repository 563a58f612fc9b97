// Bench for the probe protocol: iCE40 resource use of the serial link (Yosys synth_ice40) at several payload
// widths, and the TypeScript stream decoder's throughput. Figures are reported, never asserted.
import { pathToFileURL } from 'node:url';
import { SeededRandom } from '../../core/util/prng';
import { FrameDecoder } from '../../core/protocol/decoder';
import { encodeCycleFrame, makeLayout, type FrameField } from '../../core/protocol/frame';
import { synthIce40 } from '../protocol-hdl';

/** LUT4 budget for the packer + CRC + COBS + TX + RX at 32 payload bits. */
const LUT_GOAL_32 = 250;

function resourceLines(): string[] {
  const lines: string[] = [];
  for (const bits of [16, 32, 64]) {
    const c = synthIce40(bits);
    const goal = bits === 32 ? ` (goal <= ${LUT_GOAL_32}: ${c.luts <= LUT_GOAL_32 ? 'met' : 'missed'})` : '';
    lines.push(`protocol: ts_probe_link ${bits} payload bits, synth_ice40: ${c.luts} SB_LUT4${goal}, ${c.flipFlops} flip-flops, ${c.carries} SB_CARRY, ${c.blockRams} SB_RAM40_4K`);
  }
  return lines;
}

function decoderLine(): string {
  const fields: FrameField[] = [
    { name: 'state', width: 4 },
    { name: 'acc', width: 16 },
    { name: 'index', width: 8 },
    { name: 'busy', width: 1 },
    { name: 'done', width: 1 },
    { name: 'go', width: 2 },
  ];
  const layout = makeLayout(fields);
  const rng = new SeededRandom(99);
  const frames = 20_000;
  const frameBytes = encodeCycleFrame(layout, 0, fields.map(() => 0n)).length;
  const stream = new Uint8Array(frames * frameBytes);
  for (let k = 0; k < frames; k++) stream.set(encodeCycleFrame(layout, k, fields.map((f) => rng.bits(f.width))), k * frameBytes);
  const chunk = 4096;
  const rounds = 5;
  let best = Number.POSITIVE_INFINITY;
  let decoded = 0;
  for (let r = 0; r < rounds; r++) {
    const decoder = new FrameDecoder(layout);
    const t0 = performance.now();
    for (let at = 0; at < stream.length; at += chunk) decoder.push(stream.subarray(at, at + chunk));
    best = Math.min(best, performance.now() - t0);
    decoded = decoder.stats.cycleFrames;
  }
  const mbPerS = stream.length / 1e6 / (best / 1000);
  return `protocol: FrameDecoder ${layout.payloadBits}-bit payload, ${frameBytes}-byte frames: ${mbPerS.toFixed(1)} MB/s (${Math.round(decoded / (best / 1000))} frames/s, best of ${rounds}, ${decoded} frames)`;
}

/** Lines of figures for the bench report. */
export async function benchProtocol(): Promise<string> {
  return [...resourceLines(), decoderLine()].join('\n');
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  benchProtocol().then((text) => console.log(text));
}
