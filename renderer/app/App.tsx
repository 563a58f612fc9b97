// The app frame: header with the design's identity and the bench-safety button, a left rail of
// screens, and the document state (design text and its latest check) that every screen shares.
import { useCallback, useEffect, useRef, useState } from 'react';
import type { CheckResultView, JobStartRequest, ResultOf } from '../../core/services/api';
import { call, startJob, transportKind, type JobHandle } from '../api/client';
import { BenchScreen, DEFAULT_BENCH, type BenchSettings } from '../bench/BenchScreen';
import { DesignScreen } from '../design/DesignScreen';
import { DEFAULT_HDL, HdlScreen, type HdlSettings } from '../hdl/HdlScreen';
import { MachineScreen } from '../machine/MachineScreen';
import { SafetyPanel, safetyAcknowledged } from '../safety/SafetyPanel';
import { SessionScreen } from '../session/SessionScreen';
import { applySessionEvent, emptySession, type SessionData } from '../session/store';
import { SimulateScreen, type SimState } from '../sim/SimulateScreen';
import { Icon, type IconName } from './Icon';

export type Screen = 'design' | 'machine' | 'hdl' | 'simulate' | 'bench' | 'session';

export interface DesignDoc {
  file: string;
  text: string;
  /** Increments on every edit, so late check replies for older text are dropped. */
  revision: number;
}

const SCREENS: { id: Screen; label: string; icon: IconName }[] = [
  { id: 'design', label: 'Design', icon: 'design' },
  { id: 'machine', label: 'Machine', icon: 'machine' },
  { id: 'hdl', label: 'HDL', icon: 'hdl' },
  { id: 'simulate', label: 'Simulate', icon: 'wave' },
  { id: 'bench', label: 'Bench', icon: 'bench' },
  { id: 'session', label: 'Session', icon: 'session' },
];

const CHECK_DELAY_MS = 250;
const DEFAULT_DEMO = 'tank_dosing';

export function App() {
  const [screen, setScreen] = useState<Screen>('design');
  const [doc, setDoc] = useState<DesignDoc | null>(null);
  const [check, setCheck] = useState<CheckResultView | null>(null);
  const [checking, setChecking] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);
  const [info, setInfo] = useState<ResultOf<'app.info'> | null>(null);
  const [safetyOpen, setSafetyOpen] = useState(false);
  const [sim, setSim] = useState<SimState>({ source: 'random', cycles: 2000, seed: 7, csv: '', radix: 'dec', result: null, running: false, error: null, progress: null, job: null, runId: 0 });
  const [hdl, setHdl] = useState<HdlSettings>(DEFAULT_HDL);
  const [bench, setBench] = useState<BenchSettings>(DEFAULT_BENCH);
  const [session, setSession] = useState<SessionData | null>(null);
  const sessionJob = useRef<JobHandle | null>(null);
  const sessionData = useRef<SessionData | null>(null);
  const sessionGen = useRef(0);
  const latest = useRef(0);

  /** Starts a bench session or a replay; returns a message when it could not start. */
  const startSession = useCallback(async (req: JobStartRequest): Promise<string | null> => {
    await sessionJob.current?.cancel();
    // Events of an older session that are still in flight must not land in the new one.
    const gen = ++sessionGen.current;
    const source = req.kind === 'replay' ? 'replay' : req.kind === 'bench' && req.link.kind === 'serial' ? 'serial' : 'emulator';
    const r = await startJob(req, (e) => {
      if (sessionGen.current !== gen) return;
      // Folded here, once per event (the arrays grow in place), not inside a state updater that may rerun.
      const base = sessionData.current && sessionData.current.job === e.job ? sessionData.current : emptySession(e.job, source, 'starting…');
      sessionData.current = applySessionEvent(base, e);
      setSession(sessionData.current);
    });
    if (!r.ok) return r.error.message;
    sessionJob.current = r.value;
    if (sessionData.current?.job !== r.value.job) {
      sessionData.current = emptySession(r.value.job, source, 'starting…');
      setSession(sessionData.current);
    }
    setScreen('session');
    return null;
  }, []);
  const stopSession = useCallback(() => void sessionJob.current?.cancel(), []);
  const boardCommand = useCallback(async (cmd: 'run' | 'halt' | 'reset' | { step: number }) => {
    const job = sessionJob.current?.job;
    if (job === undefined) return;
    const command = typeof cmd === 'string' ? { kind: cmd } : { kind: 'step' as const, cycles: cmd.step };
    const r = await call('bench.command', { job, command });
    if (!r.ok) setProblem(r.error.message);
  }, []);

  const openDemo = useCallback(async (id: string) => {
    const r = await call('files.readDemo', { id });
    if (!r.ok) return setProblem(r.error.message);
    setDoc((d) => ({ file: r.value.file, text: r.value.text, revision: (d?.revision ?? 0) + 1 }));
  }, []);

  useEffect(() => {
    void call('app.info', undefined).then((r) => (r.ok ? setInfo(r.value) : setProblem(r.error.message)));
    void openDemo(DEFAULT_DEMO);
  }, [openDemo]);

  // Check the design a moment after typing stops; only the reply for the newest text is kept.
  useEffect(() => {
    if (!doc) return;
    const revision = doc.revision;
    latest.current = revision;
    setChecking(true);
    const timer = setTimeout(async () => {
      const r = await call('design.check', { text: doc.text, file: doc.file });
      if (latest.current !== revision) return;
      setChecking(false);
      if (r.ok) {
        setCheck(r.value);
        setProblem(null);
      } else setProblem(r.error.message);
    }, CHECK_DELAY_MS);
    return () => clearTimeout(timer);
  }, [doc]);

  const editText = useCallback((text: string) => setDoc((d) => ({ file: d?.file ?? 'design.tsm', text, revision: (d?.revision ?? 0) + 1 })), []);
  const openFile = useCallback((file: string, text: string) => setDoc((d) => ({ file, text, revision: (d?.revision ?? 0) + 1 })), []);

  const goTo = (s: Screen) => {
    setScreen(s);
    if (s === 'bench' && !safetyAcknowledged()) setSafetyOpen(true);
  };

  const errors = check?.diagnostics.filter((d) => d.severity === 'error').length ?? 0;
  return (
    <div className="app">
      <header className="topbar">
        <div className="brand">
          <span className="brand-mark" aria-hidden>
            <svg width="22" height="22" viewBox="0 0 22 22">
              <path d="M2 15 H6 V7 H10 V15 H12 V7 H16 V15 H20" fill="none" stroke="currentColor" strokeWidth="2" />
            </svg>
          </span>
          <span className="brand-name">Twinstep</span>
        </div>
        <div className="doc-id">
          <span className="doc-file">{doc?.file ?? '—'}</span>
          {check?.machine && <span className="doc-machine">machine {check.machine.name}</span>}
          {check?.fingerprint && (
            <span className="doc-fp" title={`design fingerprint ${check.fingerprint}`}>
              #{check.fingerprint.slice(0, 8)}
            </span>
          )}
          <span className={`doc-status ${checking ? 'busy' : errors ? 'bad' : 'good'}`} data-testid="check-status">
            {checking ? 'checking…' : check ? (errors ? `${errors} error${errors > 1 ? 's' : ''}` : 'checked, no errors') : ''}
          </span>
        </div>
        <div className="topbar-right">
          <span className="shell-tag" title="how this window reaches the Twinstep service">
            {transportKind() === 'electron' ? 'desktop' : 'browser · 127.0.0.1'}
          </span>
          <button className="safety-button" onClick={() => setSafetyOpen(true)} data-testid="safety-button">
            <Icon name="shield" /> Bench safety
          </button>
        </div>
      </header>
      <nav className="rail" aria-label="Screens">
        {SCREENS.map((s) => (
          <button key={s.id} className={`rail-item ${screen === s.id ? 'active' : ''}`} onClick={() => goTo(s.id)} aria-current={screen === s.id ? 'page' : undefined} data-testid={`nav-${s.id}`}>
            <Icon name={s.icon} />
            <span>{s.label}</span>
          </button>
        ))}
      </nav>
      <main className="content">
        {problem && (
          <div className="banner error" role="alert">
            {problem}
          </div>
        )}
        {screen === 'design' && <DesignScreen doc={doc} check={check} onEdit={editText} onOpen={openFile} onOpenDemo={openDemo} />}
        {screen === 'machine' && <MachineScreen doc={doc} check={check} synthAvailable={info?.features.synth ?? false} />}
        {screen === 'simulate' && <SimulateScreen doc={doc} check={check} sim={sim} setSim={setSim} />}
        {screen === 'hdl' && <HdlScreen doc={doc} check={check} settings={hdl} setSettings={(p) => setHdl((x) => ({ ...x, ...p }))} folderExport={info?.features.folderExport ?? false} />}
        {screen === 'bench' && (
          <BenchScreen
            doc={doc}
            m={check?.machine ?? null}
            settings={bench}
            setSettings={(p) => setBench((x) => ({ ...x, ...p }))}
            session={session}
            onStart={startSession}
            onStop={stopSession}
            onCommand={boardCommand}
            onShowSafety={() => setSafetyOpen(true)}
            onOpenSession={() => setScreen('session')}
          />
        )}
        {screen === 'session' && <SessionScreen session={session} check={check} onCommand={boardCommand} onStop={stopSession} onOpenBench={() => goTo('bench')} />}
      </main>
      {safetyOpen && <SafetyPanel onClose={() => setSafetyOpen(false)} />}
    </div>
  );
}
