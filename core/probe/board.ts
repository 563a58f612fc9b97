// Probe generation for one design: checks clock, baud and payload, then returns the Verilog files of the board
// top with the probe (`<m>_board`), for `twinstep gen --probe`. Every bad setting is a message, never a throw.
import type { Machine } from '../ir/schema';
import type { Synthesis } from '../synth/schema';
import { generateHdl, type HdlFile, type HdlNames, type ResetPolarity } from '../hdl/modules';
import { boardTopVerilog, observedDatapath, probeCtrlVerilog, PROBE_RX, PROBE_TX } from '../hdl/probe';
import { baudPlan, type BaudPlan } from '../protocol/baud';
import { protocolVerilogBlocks } from '../protocol/verilog/index';
import { wireCycleFrameLength, ID_FRAME_BYTES, ID_PERIOD, MAX_PAYLOAD_BITS } from '../protocol/frame';
import { probeLayout, type ProbeLayout } from './layout';

/** Common practice for a USB serial adapter; any baud the clock reaches within tolerance will do. */
export const DEFAULT_PROBE_BAUD = 115200;

export interface ProbeGenOptions {
  /** Board clock in Hz; defaults to the design's `clock` statement. */
  clockHz?: number;
  /** Probe UART baud; default 115200. */
  baud?: number;
  reset: ResetPolarity;
  /** The board waits for a host command before its first cycle (default: it starts running). */
  startHalted?: boolean;
}

export interface ProbeBuild {
  files: HdlFile[];
  notes: string[];
  layout: ProbeLayout;
  plan: BaudPlan;
  /** Module name of the board top. */
  top: string;
}

export type ProbeBuildResult = ({ ok: true } & ProbeBuild) | { ok: false; error: string };
export type ProbeFilesResult = { ok: true; files: HdlFile[]; notes: string[] } | { ok: false; error: string };

/** The generic blocks the board needs, one module per file: UART, CRC, the frame packer (which does its own COBS stuffing), ts_probe_ctrl. */
export function probeBlockFiles(): HdlFile[] {
  const blocks = protocolVerilogBlocks().filter((b) => b.module !== 'ts_probe_link');
  return [...blocks, { module: 'ts_probe_ctrl', source: probeCtrlVerilog() }].map((b) => ({ name: `${b.module}.v`, text: `\`timescale 1ns/1ps\n${b.source}` }));
}

/** Check the configuration and build the probe's files; `names` are those of the plain HDL (`generateHdl`). */
export function buildProbe(m: Machine, syn: Synthesis, names: HdlNames, opts: ProbeGenOptions): ProbeBuildResult {
  const clockHz = opts.clockHz ?? m.clockHz ?? undefined;
  if (clockHz === undefined) {
    return { ok: false, error: `probe: no clock frequency for ${m.name}: give --clock-hz or state the clock in the design (e.g. 'clock 12 MHz')` };
  }
  const baud = opts.baud ?? DEFAULT_PROBE_BAUD;
  const planned = baudPlan(clockHz, baud);
  if (!planned.ok) return { ok: false, error: `probe: ${planned.error}` };
  const plan = planned.plan;
  if (plan.warnings.length) {
    return { ok: false, error: `probe: ${baud} baud cannot be reached within tolerance from a ${clockHz} Hz clock: ${plan.warnings.join(' ')}` };
  }
  const laid = probeLayout(m, syn);
  if (!laid.ok) return { ok: false, error: `probe: ${laid.error}; the probe carries at most ${MAX_PAYLOAD_BITS} bits per frame` };
  const layout = laid.layout;
  const dp = generateHdl(m, syn, { controller: 'behavioral', reset: opts.reset }).files.find((f) => f.name === `${names.datapath}.v`);
  if (!dp) return { ok: false, error: `probe: the datapath module ${names.datapath} was not generated` };
  const startHalted = opts.startHalted ?? false;
  const board = boardTopVerilog(m, syn, names, {
    fields: layout.fields,
    payloadBits: layout.frame.payloadBits,
    fingerprint: layout.fingerprint,
    divisor: plan.divisor,
    clockHz,
    baud,
    startHalted,
    datapathText: dp.text,
  });
  const frameBytes = wireCycleFrameLength(layout.frame);
  const bytesPerCycle = frameBytes + ID_FRAME_BYTES / ID_PERIOD;
  const notes = [
    `probe UART: ${baud} baud from ${clockHz} Hz, divisor ${plan.divisor} (actual ${plan.actualBaud.toFixed(1)} baud, ${(plan.relativeError * 100).toFixed(2)}% off), 8N1 on ${PROBE_TX} (out) and ${PROBE_RX} (in)`,
    `frame: ${layout.frame.payloadBits} payload bits, ${frameBytes} bytes on the wire; lockstep pace about ${Math.floor(plan.actualBaud / (10 * bytesPerCycle))} cycles per second`,
    `board top ${m.name}_board also needs ${names.controller}.v from the plain HDL`,
  ];
  return {
    ok: true,
    files: [...probeBlockFiles(), observedDatapath(m, names, dp.text), board],
    notes,
    layout,
    plan,
    top: `${m.name}_board`,
  };
}

/** What `twinstep gen --probe` calls: the probe's files and notes, or one error message. */
export function generateProbeFiles(m: Machine, syn: Synthesis, names: HdlNames, opts: ProbeGenOptions): ProbeFilesResult {
  try {
    const r = buildProbe(m, syn, names, opts);
    return r.ok ? { ok: true, files: r.files, notes: r.notes } : r;
  } catch (e) {
    return { ok: false, error: `probe: ${e instanceof Error ? e.message : String(e)}` };
  }
}
