// The app frame: header with the design's identity and the bench-safety button, a left rail of
// screens, and the document state (design text and its latest check) that every screen shares.
import { useCallback, useEffect, useRef, useState } from 'react';
import type { CheckResultView, ResultOf } from '../../core/services/api';
import { call, transportKind } from '../api/client';
import { BenchScreen } from '../bench/BenchScreen';
import { DesignScreen } from '../design/DesignScreen';
import { MachineScreen } from '../machine/MachineScreen';
import { SafetyPanel, safetyAcknowledged } from '../safety/SafetyPanel';
import { SimulateScreen, type SimState } from '../sim/SimulateScreen';
import { Icon, type IconName } from './Icon';

export type Screen = 'design' | 'machine' | 'simulate' | 'bench';

export interface DesignDoc {
  file: string;
  text: string;
  /** Increments on every edit, so late check replies for older text are dropped. */
  revision: number;
}

const SCREENS: { id: Screen; label: string; icon: IconName }[] = [
  { id: 'design', label: 'Design', icon: 'design' },
  { id: 'machine', label: 'Machine', icon: 'machine' },
  { id: 'simulate', label: 'Simulate', icon: 'wave' },
  { id: 'bench', label: 'Bench', icon: 'bench' },
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
  const [sim, setSim] = useState<SimState>({ source: 'random', cycles: 2000, seed: 7, csv: '', radix: 'dec', result: null, running: false, error: null });
  const latest = useRef(0);

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
        {screen === 'bench' && <BenchScreen onShowSafety={() => setSafetyOpen(true)} />}
      </main>
      {safetyOpen && <SafetyPanel onClose={() => setSafetyOpen(false)} />}
    </div>
  );
}
