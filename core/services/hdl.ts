// HDL generation for the app: the design's Verilog files for an encoding and controller style and, when
// asked, the board top with the UART probe, each file tagged with its group and the role its header states.
import type { Machine } from '../ir/schema';
import { generateHdl } from '../hdl/modules';
import { generateProbeFiles } from '../probe/board';
import { synthesize } from '../synth/index';
import type { HdlFileView, HdlGenerateRequest, HdlResultView } from './api';

/** The role a generated file states in its first line (`// name.v: role`). */
export function fileRole(text: string): string {
  const first = text.split('\n', 1)[0] ?? '';
  const m = /^\/\/\s*[^:]+:\s*(.+)$/.exec(first);
  return m ? m[1].trim() : '';
}

function view(group: HdlFileView['group'], f: { name: string; text: string }): HdlFileView {
  return { name: f.name, group, role: fileRole(f.text), text: f.text };
}

/** Generates the files for a checked machine; synthesis and probe problems come back as messages. */
export function hdlFiles(m: Machine, req: Pick<HdlGenerateRequest, 'encoding' | 'controller' | 'reset' | 'probe'>): HdlResultView {
  const syn = synthesize(m, { encoding: req.encoding });
  if (!syn.ok) {
    return { diagnostics: [{ severity: 'error', line: 1, col: 1, message: `synthesis failed: ${syn.error}`, hint: 'choose another encoding, or check the design' }], files: [], notes: [], probeError: null };
  }
  const hdl = generateHdl(m, syn.result, { controller: req.controller, reset: req.reset });
  const files = hdl.files.map((f) => view('design', f));
  if (!req.probe) return { diagnostics: [], files, notes: [], probeError: null };
  const probe = generateProbeFiles(m, syn.result, hdl.names, { clockHz: req.probe.clockHz, baud: req.probe.baud, reset: req.reset, startHalted: req.probe.startHalted });
  if (!probe.ok) return { diagnostics: [], files, notes: [], probeError: probe.error };
  return { diagnostics: [], files: [...files, ...probe.files.map((f) => view('probe', f))], notes: probe.notes, probeError: null };
}
