// The HDL screen: the generated Verilog for the chosen encoding, controller style and reset polarity, and with
// the probe its board top and UART blocks; the baud divisor and error worked out as the settings change.
// Files can be copied, downloaded one by one, or exported together (a folder in the desktop app, a ZIP in a browser).
import { useEffect, useMemo, useState } from 'react';
import { baudPlan, BAUD_TOLERANCE } from '../../core/protocol/baud';
import type { CheckResultView, Encoding, HdlFileView, HdlGenerateRequest, HdlResultView } from '../../core/services/api';
import { zipStore } from '../../core/services/zip';
import { call } from '../api/client';
import type { DesignDoc } from '../app/App';

export interface HdlSettings {
  encoding: Encoding;
  controller: 'behavioral' | 'equations';
  reset: 'low' | 'high';
  probe: boolean;
  /** Board clock in MHz as typed; null until the design's clock is known. */
  clockMhz: string | null;
  baud: number;
  startHalted: boolean;
}

export const DEFAULT_HDL: HdlSettings = { encoding: 'binary', controller: 'behavioral', reset: 'low', probe: true, clockMhz: null, baud: 115200, startHalted: false };

const BAUDS = [9600, 19200, 38400, 57600, 115200, 230400, 460800, 921600, 1000000, 2000000, 3000000];
const GENERATE_DELAY_MS = 250;

interface Props {
  doc: DesignDoc | null;
  check: CheckResultView | null;
  settings: HdlSettings;
  setSettings(patch: Partial<HdlSettings>): void;
  folderExport: boolean;
}

/** The clock in Hz from the MHz text, or null when it is not a positive number. */
export function clockHz(mhz: string): number | null {
  const v = Number(mhz.trim());
  return mhz.trim() !== '' && Number.isFinite(v) && v > 0 ? Math.round(v * 1e6) : null;
}

function save(name: string, data: BlobPart, type: string): void {
  const url = URL.createObjectURL(new Blob([data], { type }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  a.click();
  setTimeout(() => URL.revokeObjectURL(url), 2000);
}

function BaudFigures({ hz, baud }: { hz: number | null; baud: number }) {
  if (hz === null) return <p className="inline-error">Give the board clock in MHz (e.g. 12 or 100).</p>;
  const r = baudPlan(hz, baud);
  if (!r.ok) return <p className="inline-error" data-testid="baud-plan">{r.error.replace(/^baud plan: /, '')}</p>;
  const p = r.plan;
  const off = Math.abs(p.relativeError) > BAUD_TOLERANCE;
  return (
    <div className="baud-plan" data-testid="baud-plan">
      <span>
        divisor <strong>{p.divisor}</strong>
      </span>
      <span>actual {p.actualBaud.toFixed(1)} baud</span>
      <span className={off ? 'bad' : 'good'}>
        error {(p.relativeError * 100).toFixed(2)}% {off ? `(over ±${BAUD_TOLERANCE * 100}%)` : `(within ±${BAUD_TOLERANCE * 100}%)`}
      </span>
      {p.warnings.map((w, i) => (
        <span key={i} className="inline-error baud-warning">
          {w.replace(/^baud plan: /, '')}
        </span>
      ))}
    </div>
  );
}

function CodeView({ file }: { file: HdlFileView }) {
  const lines = file.text.replace(/\n$/, '').split('\n');
  return (
    <div className="code-view" data-testid="hdl-code" data-file={file.name}>
      <pre className="code-gutter" aria-hidden>
        {lines.map((_, i) => `${i + 1}\n`).join('')}
      </pre>
      <pre className="code-text">{file.text}</pre>
    </div>
  );
}

export function HdlScreen({ doc, check, settings: s, setSettings: set, folderExport }: Props) {
  const [result, setResult] = useState<HdlResultView | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [chosen, setChosen] = useState<string | null>(null);
  const [status, setStatus] = useState<string | null>(null);
  const m = check?.machine ?? null;
  const mhz = s.clockMhz ?? (m?.clockHz ? String(m.clockHz / 1e6) : '12');
  const hz = clockHz(mhz);

  const request = useMemo<HdlGenerateRequest | null>(() => {
    if (!doc || !m) return null;
    const probe = s.probe && hz !== null ? { clockHz: hz, baud: s.baud, startHalted: s.startHalted } : null;
    return { text: doc.text, file: doc.file, encoding: s.encoding, controller: s.controller, reset: s.reset, probe };
  }, [doc, m, s.encoding, s.controller, s.reset, s.probe, hz, s.baud, s.startHalted]);

  useEffect(() => {
    if (!request) return;
    let live = true;
    const timer = setTimeout(async () => {
      const r = await call('hdl.generate', request);
      if (!live) return;
      if (r.ok) {
        setResult(r.value);
        setProblem(null);
      } else setProblem(r.error.message);
    }, GENERATE_DELAY_MS);
    return () => {
      live = false;
      clearTimeout(timer);
    };
  }, [request]);

  if (!doc || !check) return <div className="screen-empty">Checking the design…</div>;
  if (!m) return <div className="screen-empty">The design has errors; fix them on the Design screen to generate HDL.</div>;
  const files = result?.files ?? [];
  const file = files.find((f) => f.name === chosen) ?? files[0] ?? null;

  const copy = async () => {
    if (!file) return;
    try {
      await navigator.clipboard.writeText(file.text);
      setStatus(`${file.name} copied to the clipboard`);
    } catch (e) {
      setStatus(`the clipboard refused the copy (${e instanceof Error ? e.message : String(e)}); use Download instead`);
    }
  };
  const exportAll = async () => {
    if (!request || files.length === 0) return;
    if (folderExport) {
      const r = await call('hdl.exportFolder', request);
      setStatus(r.ok ? (r.value.folder ? `wrote ${r.value.written.length} files to ${r.value.folder}` : 'export cancelled') : r.error.message);
      return;
    }
    const utf8 = new TextEncoder();
    const zip = zipStore(files.map((f) => ({ name: f.name, data: utf8.encode(f.text) })));
    save(`${m.name}_hdl.zip`, zip as Uint8Array<ArrayBuffer>, 'application/zip');
    setStatus(`${m.name}_hdl.zip: ${files.length} files`);
  };

  const group = (g: HdlFileView['group']) => files.filter((f) => f.group === g);
  return (
    <div className="screen hdl-screen">
      <div className="toolbar">
        <div className="segmented" role="radiogroup" aria-label="State encoding">
          {(['binary', 'gray', 'onehot', 'custom'] as Encoding[]).map((e) => (
            <button key={e} role="radio" aria-checked={s.encoding === e} className={s.encoding === e ? 'on' : ''} onClick={() => set({ encoding: e })} data-testid={`hdl-encoding-${e}`}>
              {e === 'onehot' ? 'One-hot' : e[0].toUpperCase() + e.slice(1)}
            </button>
          ))}
        </div>
        <label className="field">
          <span>controller</span>
          <select value={s.controller} onChange={(e) => set({ controller: e.target.value as HdlSettings['controller'] })} data-testid="hdl-controller">
            <option value="behavioral">behavioral (case statement)</option>
            <option value="equations">equations (minimized logic)</option>
          </select>
        </label>
        <label className="field">
          <span>reset pin</span>
          <select value={s.reset} onChange={(e) => set({ reset: e.target.value as HdlSettings['reset'] })} data-testid="hdl-reset">
            <option value="low">active low (rst_n)</option>
            <option value="high">active high (rst)</option>
          </select>
        </label>
      </div>

      <section className="card probe-card" data-testid="probe-settings">
        <h2>
          <label className="field check">
            <input type="checkbox" checked={s.probe} onChange={(e) => set({ probe: e.target.checked })} data-testid="hdl-probe" />
            <span>UART probe</span>
          </label>
        </h2>
        {s.probe && (
          <>
            <div className="toolbar">
              <label className="field">
                <span>board clock (MHz)</span>
                <input value={mhz} onChange={(e) => set({ clockMhz: e.target.value })} className={hz === null ? 'invalid' : ''} inputMode="decimal" data-testid="hdl-clock" />
              </label>
              <label className="field">
                <span>baud</span>
                <select value={BAUDS.includes(s.baud) ? s.baud : ''} onChange={(e) => set({ baud: Number(e.target.value) })} data-testid="hdl-baud">
                  {!BAUDS.includes(s.baud) && <option value="">{s.baud}</option>}
                  {BAUDS.map((b) => (
                    <option key={b} value={b}>
                      {b}
                    </option>
                  ))}
                </select>
              </label>
              <label className="field check">
                <input type="checkbox" checked={s.startHalted} onChange={(e) => set({ startHalted: e.target.checked })} data-testid="hdl-start-halted" />
                <span>start halted (wait for the host's first command)</span>
              </label>
            </div>
            <BaudFigures hz={hz} baud={s.baud} />
            <ul className="probe-facts">
              <li>
                <strong>Lockstep:</strong> the design advances one cycle per frame handed to the UART, so the board runs at the line's pace, not the clock's; the host can halt, step and reset it.
              </li>
              <li>
                <strong>Host-driven inputs:</strong> the probe can switch the design's inputs from the board pins to vectors sent by the host (Bench → host-driven inputs).
              </li>
              {result?.notes.map((n, i) => (
                <li key={i} className="muted">
                  {n}
                </li>
              ))}
            </ul>
            {result?.probeError && (
              <div className="banner error" data-testid="probe-error">
                {result.probeError}
              </div>
            )}
          </>
        )}
      </section>

      {problem && <div className="banner error">{problem}</div>}
      {result?.diagnostics.map((d, i) => (
        <div key={i} className="banner error">
          {d.message}
        </div>
      ))}
      {files.length > 0 && file && (
        <div className="hdl-split">
          <nav className="file-list card" aria-label="Generated files" data-testid="hdl-files">
            {(['design', 'probe'] as const).map(
              (g) =>
                group(g).length > 0 && (
                  <div key={g}>
                    <h2>{g === 'design' ? 'Design' : 'Probe'}</h2>
                    {group(g).map((f) => (
                      <button key={f.name} className={`file-tab ${f.name === file.name ? 'on' : ''}`} onClick={() => setChosen(f.name)} title={f.role} data-testid={`hdl-file-${f.name}`}>
                        <span className="file-name">{f.name}</span>
                        <span className="file-role">{f.role}</span>
                      </button>
                    ))}
                  </div>
                ),
            )}
          </nav>
          <section className="card code-card">
            <div className="toolbar">
              <span className="file-name strong">{file.name}</span>
              <span className="muted">{file.text.split('\n').length} lines</span>
              <span className="spacer" />
              <button onClick={() => void copy()} data-testid="hdl-copy">
                Copy
              </button>
              <button onClick={() => save(file.name, file.text, 'text/plain')} data-testid="hdl-download">
                Download
              </button>
              <button className="primary" onClick={() => void exportAll()} data-testid="hdl-export">
                {folderExport ? 'Export all to a folder…' : `Download all (${files.length} files, ZIP)`}
              </button>
            </div>
            {status && (
              <p className="small-note muted" data-testid="hdl-status">
                {status}
              </p>
            )}
            <CodeView file={file} />
          </section>
        </div>
      )}
    </div>
  );
}
