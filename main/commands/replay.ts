// `twinstep replay CAPTURE --design FILE`: feeds a recorded capture through the same decoder and comparator
// as a live run and prints the verdicts; optionally a VCD of board and model, and a replay testbench.
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { EXIT, parseOptions, type CliIO, usageFailure } from '../cli-io';
import { loadDesign } from '../design-file';
import { createComparator, type Comparator } from '../../core/compare/comparator';
import { fingerprintNote, layoutMismatch } from '../../core/capture/header';
import type { CaptureHeader } from '../../core/capture/format';
import type { CaptureRecord } from '../../core/capture/reader';
import { VcdWriter } from '../../core/export/vcd';
import { DEFAULT_TESTBENCH_CYCLES, ReplayTestbenchCollector } from '../../core/export/testbench';
import { probeMap } from '../../core/compare/probe-map';
import { generateHdl, type ControllerStyle, type ResetPolarity } from '../../core/hdl/modules';
import type { Machine } from '../../core/ir/schema';
import type { Synthesis } from '../../core/synth/schema';
import { readCaptureFile } from '../serial/capture-file';
import { isEncoding, jsonLine, prepareDesign, VerdictPrinter } from '../serial/session';
import { TextFile } from '../serial/text-sink';

const USAGE = `usage: twinstep replay CAPTURE --design FILE.tsm [--json] [--encoding binary|gray|onehot|custom]
                      [--vcd OUT.vcd] [--testbench DIR [--controller behavioral|equations] [--reset low|high] [--tb-cycles N]]
                      [--limit N]
Exit status: 0 the board agreed with the model, 3 divergences, 2 the capture or design cannot be used.
`;

const WHO = 'twinstep replay';

export async function run(argv: string[], io: CliIO): Promise<number> {
  const opts = parseOptions(argv, { flags: ['help', 'json'], values: ['design', 'encoding', 'vcd', 'testbench', 'controller', 'reset', 'tb-cycles', 'limit'] });
  if (opts.flags.has('help')) {
    io.out(USAGE);
    return EXIT.ok;
  }
  const problems = [...opts.problems];
  const designFile = opts.values.get('design');
  const encodingOpt = opts.values.get('encoding');
  const controller = opts.values.get('controller') ?? 'behavioral';
  const reset = opts.values.get('reset') ?? 'low';
  const tbCycles = Number(opts.values.get('tb-cycles') ?? DEFAULT_TESTBENCH_CYCLES);
  const limit = Number(opts.values.get('limit') ?? 200);
  if (opts.positionals.length !== 1) problems.push('give exactly one capture file');
  if (!designFile) problems.push('--design FILE.tsm is required (the design the board was built from)');
  if (encodingOpt !== undefined && !isEncoding(encodingOpt)) problems.push(`unknown encoding '${encodingOpt}'`);
  if (!['behavioral', 'equations'].includes(controller)) problems.push(`unknown controller style '${controller}'`);
  if (!['low', 'high'].includes(reset)) problems.push(`--reset takes low or high, not '${reset}'`);
  if (!Number.isInteger(tbCycles) || tbCycles < 1) problems.push('--tb-cycles needs a positive whole number');
  if (!Number.isInteger(limit) || limit < 0) problems.push('--limit needs a whole number');
  if (problems.length) return usageFailure(io, WHO, problems, USAGE);
  const m = loadDesign(designFile!, io, { quietWarnings: true });
  if (!m) return EXIT.usage;
  const capturePath = path.resolve(io.cwd, opts.positionals[0]);
  const json = opts.flags.has('json');
  const printer = new VerdictPrinter(io, json, limit);

  let fatal: string | null = null;
  let comparator: Comparator | null = null;
  let syn: Synthesis | null = null;
  let vcd: { writer: VcdWriter; file: TextFile } | null = null;
  let collector: ReplayTestbenchCollector | null = null;

  const setup = (h: CaptureHeader) => {
    const encoding = encodingOpt && isEncoding(encodingOpt) ? encodingOpt : h.design.encoding;
    const prepared = prepareDesign(m, encoding, io, WHO);
    if (!prepared) {
      fatal = 'the design cannot be prepared for comparison';
      return;
    }
    syn = prepared.syn;
    const mismatch = layoutMismatch(h, prepared.layout);
    if (mismatch) {
      fatal = `${mismatch}; was the board built with another encoding (--encoding) or another design?`;
      return;
    }
    const note = fingerprintNote(h, m);
    if (note) printer.event('capture-problem', { severity: 'warning', message: note }, `${WHO}: warning: ${note}`);
    const vcdPath = opts.values.get('vcd');
    if (vcdPath) {
      const f = TextFile.create(path.resolve(io.cwd, vcdPath));
      if (!f.ok) {
        fatal = f.error;
        return;
      }
      const writer = new VcdWriter({ layout: prepared.layout, design: m.name, clockHz: h.link.clockHz ?? m.clockHz, date: h.startedAt });
      f.file.write(writer.header);
      vcd = { writer, file: f.file };
    }
    if (opts.values.has('testbench')) {
      const pm = probeMap(m, prepared.syn, prepared.layout);
      if (pm.ok) collector = new ReplayTestbenchCollector(m, pm.map, tbCycles);
    }
    const observe = vcd || collector;
    const made = createComparator({
      machine: m,
      synthesis: prepared.syn,
      layout: prepared.layout,
      onVerdict: (v) => printer.verdict(v),
      onFrame: observe
        ? (f) => {
            if (vcd) vcd.file.write(vcd.writer.frame(f));
            collector?.observe(f);
          }
        : undefined,
    });
    if (!made.ok) {
      fatal = made.error;
      return;
    }
    comparator = made.comparator;
  };

  const read = readCaptureFile(capturePath, {
    header: setup,
    record: (r: CaptureRecord) => {
      if (fatal || !comparator) return;
      if (r.kind === 'received') comparator.push(r.body);
      else if (r.kind === 'note') {
        const text = new TextDecoder().decode(r.body);
        printer.event('note', { timeMicros: r.timeMicros, note: safeJson(text) }, `${WHO}: recorder note at ${(r.timeMicros / 1e6).toFixed(3)} s: ${noteText(text)}`);
      }
    },
    problem: (p) => printer.event('capture-problem', { severity: p.severity, message: p.message, offset: p.offset }, `${opts.positionals[0]}: ${p.severity}: ${p.message}`),
  });
  if (!read.ok) {
    io.err(`${WHO}: ${read.error}\n`);
    return EXIT.usage;
  }
  if (fatal) {
    io.err(`${WHO}: ${fatal}\n`);
    return EXIT.usage;
  }
  const cmp = comparator as Comparator | null;
  if (!read.summary.usable || !cmp) return EXIT.usage;
  const summary = cmp.finish();
  if (json) io.out(jsonLine({ kind: 'capture', file: opts.positionals[0], records: read.summary.records, receivedBytes: read.summary.receivedBytes, truncated: read.summary.truncated, skippedBytes: read.summary.skippedBytes, end: read.summary.end }));
  else if (!read.summary.end) io.err(`${WHO}: note: the capture has no end record: the recorder did not close it (killed, crashed or the cable was pulled); everything it holds was replayed\n`);
  const finishing = vcd as { writer: VcdWriter; file: TextFile } | null;
  if (finishing) {
    finishing.file.write(finishing.writer.finish());
    finishing.file.close();
    if (finishing.file.failure) io.err(`${WHO}: ${finishing.file.failure}\n`);
  }
  const tbCollector = collector as ReplayTestbenchCollector | null;
  if (tbCollector && syn) {
    const written = writeTestbench(tbCollector, m, syn, opts.values.get('testbench')!, controller as ControllerStyle, reset as ResetPolarity, opts.positionals[0], io);
    if (!written) return EXIT.usage;
  }
  if (summary.outcome === 'no-frames') {
    io.err(`${WHO}: the capture holds no cycle frames to compare (${summary.bytes} bytes received${summary.framingErrors + summary.crcErrors ? `, ${summary.framingErrors + summary.crcErrors} damaged frames` : ''}); check the baud and the probe wiring\n`);
    return EXIT.usage;
  }
  return summary.outcome === 'diverged' ? EXIT.divergences : EXIT.ok;
}

function writeTestbench(collector: ReplayTestbenchCollector, m: Machine, syn: Synthesis, dir: string, controller: ControllerStyle, reset: ResetPolarity, source: string, io: CliIO): boolean {
  const hdl = generateHdl(m, syn, { controller, reset });
  const tb = collector.build(hdl.names, path.basename(source));
  if (!tb.ok) {
    io.err(`${WHO}: no testbench written: ${tb.error}\n`);
    return false;
  }
  const out = path.resolve(io.cwd, dir);
  try {
    mkdirSync(out, { recursive: true });
    for (const f of [...hdl.files, { name: tb.name, text: tb.text }]) writeFileSync(path.join(out, f.name), f.text);
  } catch (e) {
    io.err(`${WHO}: cannot write the testbench into ${dir}: ${(e as Error).message}\n`);
    return false;
  }
  io.err(`${WHO}: testbench ${path.join(dir, tb.name)} ${tb.note}; with the design's modules in ${dir} (run: iverilog -g2001 -o sim ${dir}/*.v && vvp sim)\n`);
  return true;
}

function safeJson(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    return text;
  }
}

function noteText(text: string): string {
  const v = safeJson(text) as { event?: string; message?: string };
  return v && typeof v === 'object' && v.message ? `${v.event ?? 'note'}: ${v.message}` : text;
}
