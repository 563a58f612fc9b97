// The Bench screen: connect a board over a serial port or the emulated board (with injected faults), record
// to a capture, replay a capture; live counters and board controls. Connecting needs the safety notes read first.
import { useCallback, useEffect, useState, type ChangeEvent } from 'react';
import { MAX_UPLOAD_BASE64, type Encoding, type JobStartRequest, type MachineSummary, type ResultOf } from '../../core/services/api';
import { call } from '../api/client';
import type { DesignDoc } from '../app/App';
import { Progress } from '../app/Progress';
import { safetyAcknowledged } from '../safety/SafetyPanel';
import type { SessionData } from '../session/store';
import { BoardControls, CounterStrip } from '../session/widgets';

export interface BenchSettings {
  link: 'emulator' | 'serial';
  faults: string[];
  seed: number;
  baud: number;
  port: string;
  encoding: Encoding;
  record: boolean;
  hostInputs: boolean;
  hostSeed: number;
}

export const DEFAULT_BENCH: BenchSettings = { link: 'emulator', faults: [], seed: 1, baud: 115200, port: '', encoding: 'binary', record: true, hostInputs: false, hostSeed: 1 };

const BAUDS = [9600, 19200, 38400, 57600, 115200, 230400, 460800, 921600, 1000000, 2000000, 3000000];

/** Fault examples for this design: a stuck register bit, a wrong transition, lost bytes, a baud mismatch. */
export function faultPresets(m: MachineSummary): { label: string; spec: string }[] {
  const out: { label: string; spec: string }[] = [];
  const reg = m.registers[0];
  if (reg) out.push({ label: `bit of ${reg.name} stuck at 1`, spec: `stuck:${reg.name}:${Math.min(2, reg.width - 1)}:1@40` });
  if (m.states.length > 1) out.push({ label: `${m.states[1].name} falls back to ${m.states[0].name}`, spec: `transition:${m.states[1].name}->${m.states[0].name}@25` });
  out.push({ label: 'one byte in 500 lost', spec: 'drop:500' });
  out.push({ label: 'host receives 5% fast', spec: 'baud:1.05:1' });
  return out;
}

/** The bytes of a file as base64, in slices (String.fromCharCode takes a bounded number of arguments). */
export function bytesToBase64(bytes: Uint8Array): string {
  let text = '';
  for (let i = 0; i < bytes.length; i += 0x8000) text += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(text);
}

interface Props {
  doc: DesignDoc | null;
  m: MachineSummary | null;
  settings: BenchSettings;
  setSettings(patch: Partial<BenchSettings>): void;
  session: SessionData | null;
  onStart(req: JobStartRequest): Promise<string | null>;
  onStop(): void;
  onCommand(cmd: 'run' | 'halt' | 'reset' | { step: number }): void;
  onShowSafety(): void;
  onOpenSession(): void;
}

function uploadLimitBytes(): number {
  return Math.floor((MAX_UPLOAD_BASE64 * 3) / 4);
}

export function BenchScreen({ doc, m, settings: s, setSettings: set, session, onStart, onStop, onCommand, onShowSafety, onOpenSession }: Props) {
  const [ports, setPorts] = useState<ResultOf<'bench.ports'> | null>(null);
  const [captures, setCaptures] = useState<ResultOf<'capture.list'> | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const live = session !== null && (session.status === 'live' || session.status === 'starting');

  const refreshPorts = useCallback(async () => {
    const r = await call('bench.ports', undefined);
    if (r.ok) setPorts(r.value);
    else setProblem(r.error.message);
  }, []);
  const refreshCaptures = useCallback(async () => {
    const r = await call('capture.list', undefined);
    if (r.ok) setCaptures(r.value);
  }, []);
  useEffect(() => {
    void refreshPorts();
    void refreshCaptures();
  }, [refreshPorts, refreshCaptures]);
  useEffect(() => {
    if (session?.status === 'ended') void refreshCaptures();
  }, [session?.status, refreshCaptures]);

  const start = async (req: JobStartRequest) => {
    setBusy(true);
    const err = await onStart(req);
    setBusy(false);
    setProblem(err);
  };

  const connect = () => {
    if (!doc || !m) return;
    // The safety notes come first: connecting waits until they have been read and acknowledged.
    if (!safetyAcknowledged()) {
      setProblem('Read the bench safety notes and acknowledge them, then connect.');
      onShowSafety();
      return;
    }
    if (s.link === 'serial' && !s.port) return setProblem('Choose a serial port first (Refresh lists them).');
    const link = s.link === 'emulator' ? { kind: 'emulator' as const, faults: s.faults.map((f) => f.trim()).filter(Boolean), seed: s.seed, baud: s.baud } : { kind: 'serial' as const, port: s.port, baud: s.baud };
    void start({ kind: 'bench', text: doc.text, file: doc.file, encoding: s.encoding, link, record: s.record, hostInputs: s.hostInputs ? { seed: s.hostSeed } : null, safetyAcknowledged: true });
  };

  const replayFile = async (e: ChangeEvent<HTMLInputElement>) => {
    const f = e.target.files?.[0];
    e.target.value = '';
    if (!f || !doc) return;
    if (f.size > uploadLimitBytes()) return setProblem(`${f.name} is ${f.size} bytes; files up to ${uploadLimitBytes()} bytes can be opened here. Put larger captures in the capture folder (${captures?.folder ?? 'see below'}) and replay them from the list.`);
    const base64 = bytesToBase64(new Uint8Array(await f.arrayBuffer()));
    void start({ kind: 'replay', text: doc.text, file: doc.file, source: { kind: 'upload', name: f.name, base64 } });
  };

  if (!doc || !m) return <div className="screen-empty">The design must check without errors before a board can be compared with it.</div>;
  const presets = faultPresets(m);
  const acknowledged = safetyAcknowledged();
  return (
    <div className="screen bench-screen">
      {problem && (
        <div className="banner error" role="alert" data-testid="bench-problem">
          {problem}
        </div>
      )}
      <div className="bench-grid">
        <section className="card" data-testid="bench-link">
          <h2>Board link</h2>
          <div className="segmented" role="radiogroup" aria-label="Board link">
            <button role="radio" aria-checked={s.link === 'emulator'} className={s.link === 'emulator' ? 'on' : ''} onClick={() => set({ link: 'emulator' })} disabled={live} data-testid="link-emulator">
              Emulated board
            </button>
            <button role="radio" aria-checked={s.link === 'serial'} className={s.link === 'serial' ? 'on' : ''} onClick={() => set({ link: 'serial' })} disabled={live} data-testid="link-serial">
              Serial port
            </button>
          </div>
          {s.link === 'emulator' ? (
            <div className="form-block">
              <p className="muted small-note">The design with its probe, emulated in the app: the same frames a board sends, no hardware needed. Inject faults to see how divergences look.</p>
              <div className="fault-list" data-testid="fault-list">
                {s.faults.map((f, i) => (
                  <div key={i} className="fault-row">
                    <input value={f} onChange={(e) => set({ faults: s.faults.map((x, k) => (k === i ? e.target.value : x)) })} spellCheck={false} aria-label={`fault ${i + 1}`} disabled={live} data-testid={`fault-${i}`} />
                    <button onClick={() => set({ faults: s.faults.filter((_, k) => k !== i) })} disabled={live} title="Remove this fault">
                      ×
                    </button>
                  </div>
                ))}
                <select value="" onChange={(e) => e.target.value && set({ faults: [...s.faults, e.target.value] })} disabled={live || s.faults.length >= 16} aria-label="Add a fault" data-testid="fault-add">
                  <option value="">add a fault…</option>
                  {presets.map((p) => (
                    <option key={p.spec} value={p.spec}>
                      {p.label} ({p.spec})
                    </option>
                  ))}
                </select>
                <p className="muted small-note">Forms: stuck:REG:BIT:0|1@CYCLE · transition:STATE-&gt;TARGET@CYCLE · drop:N · baud:RATIO:SEED</p>
              </div>
              <label className="field">
                <span>pin seed</span>
                <input type="number" min={0} value={s.seed} onChange={(e) => set({ seed: Number(e.target.value) })} disabled={live} data-testid="emu-seed" />
              </label>
            </div>
          ) : (
            <div className="form-block">
              <div className="toolbar">
                <label className="field">
                  <span>port</span>
                  <select value={s.port} onChange={(e) => set({ port: e.target.value })} disabled={live} data-testid="serial-port">
                    <option value="">choose…</option>
                    {ports?.ports.map((p) => (
                      <option key={p.path} value={p.path}>
                        {p.path} {p.description && `— ${p.description}`}
                      </option>
                    ))}
                  </select>
                </label>
                <button onClick={() => void refreshPorts()} disabled={live} data-testid="ports-refresh">
                  Refresh
                </button>
              </div>
              {ports?.note && <p className="muted small-note">{ports.note}</p>}
              {ports && ports.ports.length === 0 && !ports.note && <p className="muted small-note">No serial ports found. Plug in the USB-UART adapter (board unpowered), then Refresh.</p>}
            </div>
          )}
          <div className="toolbar">
            <label className="field">
              <span>baud</span>
              <select value={s.baud} onChange={(e) => set({ baud: Number(e.target.value) })} disabled={live} data-testid="bench-baud">
                {BAUDS.map((b) => (
                  <option key={b} value={b}>
                    {b}
                  </option>
                ))}
              </select>
            </label>
            <label className="field">
              <span>bitstream encoding</span>
              <select value={s.encoding} onChange={(e) => set({ encoding: e.target.value as Encoding })} disabled={live} data-testid="bench-encoding">
                <option value="binary">binary</option>
                <option value="gray">Gray</option>
                <option value="onehot">one-hot</option>
                <option value="custom">custom</option>
              </select>
            </label>
          </div>
          <div className="toolbar">
            <label className="field check">
              <input type="checkbox" checked={s.record} onChange={(e) => set({ record: e.target.checked })} disabled={live} data-testid="bench-record" />
              <span>record to a capture file</span>
            </label>
            <label className="field check">
              <input type="checkbox" checked={s.hostInputs} onChange={(e) => set({ hostInputs: e.target.checked })} disabled={live} data-testid="bench-host-inputs" />
              <span>host-driven inputs</span>
            </label>
            {s.hostInputs && (
              <label className="field">
                <span>seed</span>
                <input type="number" min={0} value={s.hostSeed} onChange={(e) => set({ hostSeed: Number(e.target.value) })} disabled={live} />
              </label>
            )}
          </div>
          {s.hostInputs && <p className="muted small-note">The host sends a random input vector and steps the board one cycle at a time, waiting for each frame.</p>}
          <div className="toolbar connect-row">
            {live ? (
              <button className="primary" onClick={onStop} data-testid="bench-disconnect">
                Disconnect
              </button>
            ) : (
              <button className="primary" onClick={connect} disabled={busy} data-testid="bench-connect">
                Connect
              </button>
            )}
            {!acknowledged && !live && (
              <span className="safety-gate" data-testid="safety-gate">
                Connecting first shows the{' '}
                <button className="link" onClick={onShowSafety}>
                  bench safety notes
                </button>
                .
              </span>
            )}
          </div>
        </section>

        <section className="card" data-testid="bench-live">
          <h2>Session</h2>
          {session ? (
            <>
              <p className="session-line">
                <span className={`session-status ${session.status}`}>{session.status === 'live' ? '● live' : session.status}</span> {session.title}
              </p>
              {session.progress && <Progress done={session.progress.done} total={session.progress.total} unit="bytes" />}
              <CounterStrip counters={session.counters} />
              {live && session.source !== 'replay' && <BoardControls onCommand={onCommand} />}
              {session.capture && <p className="small-note muted">capture: {session.capture}</p>}
              {session.status === 'failed' && <div className="banner error">{session.reason}</div>}
              <div className="toolbar">
                <button onClick={onOpenSession} data-testid="open-session">
                  Open the session view
                </button>
                {live && session.source === 'replay' && <button onClick={onStop}>Cancel replay</button>}
              </div>
            </>
          ) : (
            <p className="muted">Not connected. Counters, divergences and the waveform appear here and in the session view once frames arrive.</p>
          )}
        </section>

        <section className="card" data-testid="captures">
          <h2>Captures</h2>
          <p className="muted small-note">
            Recorded to <span className="mono-line">{captures?.folder ?? '…'}</span>. Replaying runs the recorded bytes through the same comparison as a live board.
          </p>
          <div className="toolbar">
            <button onClick={() => void refreshCaptures()}>Refresh</button>
            <label className="button-like">
              Open a capture file…
              <input type="file" accept=".twcap,application/octet-stream" hidden onChange={replayFile} disabled={live} data-testid="capture-upload" />
            </label>
          </div>
          {captures && captures.captures.length > 0 ? (
            <table className="grid-table captures-table">
              <tbody>
                {captures.captures.slice(0, 30).map((c) => (
                  <tr key={c.name}>
                    <td>{c.name}</td>
                    <td>{(c.bytes / 1024).toFixed(1)} KiB</td>
                    <td>
                      <button onClick={() => void start({ kind: 'replay', text: doc.text, file: doc.file, source: { kind: 'folder', name: c.name } })} disabled={live || busy} data-testid={`replay-${c.name}`}>
                        Replay
                      </button>
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          ) : (
            <p className="muted small-note">No captures yet.</p>
          )}
        </section>
      </div>
    </div>
  );
}
