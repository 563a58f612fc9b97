// Builds the header a recorder writes at the start of a capture, from the design and the link settings,
// and checks a capture's header against the design it is replayed with.
import { fingerprint } from '../ir/fingerprint';
import type { Machine } from '../ir/schema';
import type { ProbeLayout } from '../probe/layout';
import { TOOL_VERSION } from '../util/version';
import { CAPTURE_FORMAT_VERSION, type CaptureHeader } from './format';

export interface LinkSettings {
  port: string;
  baud: number;
  clockHz: number | null;
}

export function captureHeader(m: Machine, layout: ProbeLayout, link: LinkSettings, startedAt: Date, mode: CaptureHeader['mode']): CaptureHeader {
  return {
    format: 'twinstep-capture',
    formatVersion: CAPTURE_FORMAT_VERSION,
    tool: { name: 'twinstep', version: TOOL_VERSION },
    design: { name: m.name, file: m.file, fingerprint: fingerprint(m), fingerprint32: layout.fingerprint.toString(16).padStart(8, '0'), encoding: layout.encoding },
    frame: { payloadBits: layout.frame.payloadBits, fields: layout.fields.map((f) => ({ name: f.name, width: f.width, kind: f.kind, source: f.source })) },
    link: { port: link.port, baud: link.baud, clockHz: link.clockHz },
    startedAt: startedAt.toISOString(),
    mode,
  };
}

/**
 * Why a capture cannot be compared against this design and layout (the frames would not decode), or null.
 * A different fingerprint alone is not fatal: the comparison then shows where the designs differ.
 */
export function layoutMismatch(header: CaptureHeader, layout: ProbeLayout): string | null {
  const a = header.frame.fields;
  const b = layout.fields;
  if (a.length !== b.length || a.some((f, i) => f.name !== b[i].name || f.width !== b[i].width)) {
    const describe = (fs: readonly { name: string; width: number }[]) => fs.map((f) => `${f.name}:${f.width}`).join(' ');
    return `the capture's frame layout (${describe(a)}) is not this design's (${describe(b)})`;
  }
  return null;
}

/** A warning when the capture was recorded against another version of the design, else null. */
export function fingerprintNote(header: CaptureHeader, m: Machine): string | null {
  const now = fingerprint(m);
  if (header.design.fingerprint === now) return null;
  return `the capture was recorded against design '${header.design.name}' with fingerprint ${header.design.fingerprint.slice(0, 16)}..., this design's is ${now.slice(0, 16)}...: the design changed since the recording`;
}
