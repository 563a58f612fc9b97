// The Session view: the board's frames as a waveform with the model's expected values under diverging
// signals, divergence markers, the divergence list with next/previous (buttons, n/p and ]/[), the diagnosis
// of the selected divergence, and the state diagram with the board's and the expected state marked.
import { useEffect, useMemo, useRef, useState } from 'react';
import type { CheckResultView, DivergenceView } from '../../core/services/api';
import { Progress } from '../app/Progress';
import { layoutMachine, type Diagram } from '../machine/layout';
import { StateDiagram } from '../machine/StateDiagram';
import { WaveCanvas, type Radix } from '../sim/WaveCanvas';
import { sessionWave, stepDivergence, type SessionData } from './store';
import { BoardControls, CounterStrip } from './widgets';

interface Props {
  session: SessionData | null;
  check: CheckResultView | null;
  onCommand(cmd: 'run' | 'halt' | 'reset' | { step: number }): void;
  onStop(): void;
  onOpenBench(): void;
}

/** Rows of the divergence list drawn at once, around the selected one (the list may hold thousands). */
const LIST_WINDOW = 150;

function bitsText(d: DivergenceView): string {
  if (!d.expectedBits) return '';
  return `bits ${d.differingBits.join(', ')} differ: expected ${d.expectedBits}, board ${d.actualBits}`;
}

function DivergenceDetail({ d }: { d: DivergenceView }) {
  return (
    <div className="divergence-detail" data-testid="divergence-detail">
      <h3>
        {d.signal} at cycle {d.cycle}
        {d.sinceReset !== null && d.sinceReset !== d.cycle ? ` (${d.sinceReset} after reset)` : ''}
      </h3>
      <dl className="summary">
        <dt>expected</dt>
        <dd className="model-text">{d.expected}</dd>
        <dt>board</dt>
        <dd className="board-text">{d.actual}</dd>
        {d.expectedBits && (
          <>
            <dt>bits</dt>
            <dd>{bitsText(d)}</dd>
          </>
        )}
        <dt>state</dt>
        <dd>
          {d.transition ? `board ${d.transition.from} → ${d.transition.board}, model ${d.transition.from} → ${d.transition.expected}` : `board in ${d.state}${d.expectedState && d.expectedState !== d.state ? `, model expects ${d.expectedState}` : ''}`}
        </dd>
        {d.inputsChanged.length > 0 && (
          <>
            <dt>inputs moved</dt>
            <dd>{d.inputsChanged.join(', ')}</dd>
          </>
        )}
      </dl>
      <p className="diagnosis" data-testid="diagnosis">
        {d.explanation}
      </p>
    </div>
  );
}

export function SessionScreen({ session, check, onCommand, onStop, onOpenBench }: Props) {
  const [selected, setSelected] = useState(-1);
  const [focus, setFocus] = useState<{ cycle: number; seq: number } | null>(null);
  const [radix, setRadix] = useState<Radix>('dec');
  const [follow, setFollow] = useState(true);
  const [diagram, setDiagram] = useState<Diagram | null>(null);
  const listRef = useRef<HTMLOListElement>(null);
  const m = check?.machine ?? null;
  const count = session?.divergences.length ?? 0;
  const job = session?.job;

  useEffect(() => {
    setSelected(-1);
    setFocus(null);
    setFollow(true);
  }, [job]);

  useEffect(() => {
    if (!m) return;
    let live = true;
    layoutMachine(m).then(
      (d) => live && setDiagram(d),
      () => live && setDiagram(null),
    );
    return () => {
      live = false;
    };
  }, [m]);

  const select = (k: number) => {
    if (!session || k < 0 || k >= session.divergences.length) return;
    setSelected(k);
    setFollow(false);
    setFocus((f) => ({ cycle: session.divergences[k].sample, seq: (f?.seq ?? 0) + 1 }));
  };
  const selectRef = useRef(select);
  selectRef.current = select;
  const step = (dir: 1 | -1) => selectRef.current(stepDivergence(count, selected, dir));
  const stepRef = useRef(step);
  stepRef.current = step;

  // n / ] next, p / [ previous, anywhere on this screen except in text fields.
  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      const t = e.target as HTMLElement | null;
      if (t && (t.tagName === 'INPUT' || t.tagName === 'TEXTAREA' || t.tagName === 'SELECT' || t.isContentEditable)) return;
      if (e.ctrlKey || e.metaKey || e.altKey) return;
      if (e.key === 'n' || e.key === ']') stepRef.current(1);
      else if (e.key === 'p' || e.key === '[') stepRef.current(-1);
      else return;
      e.preventDefault();
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, []);

  useEffect(() => {
    listRef.current?.querySelector('.selected')?.scrollIntoView({ block: 'nearest' });
  }, [selected]);

  const wave = useMemo(() => (session ? sessionWave(session) : null), [session]);
  if (!session) {
    return (
      <div className="screen-empty" data-testid="session-empty">
        No session yet. Connect a board or the emulated board, or replay a capture, on the{' '}
        <button className="link" onClick={onOpenBench}>
          Bench
        </button>{' '}
        screen.
      </div>
    );
  }
  const d = selected >= 0 ? session.divergences[selected] : null;
  const stateIndex = (name: string | null | undefined) => (name ? session.stateNames.indexOf(name) : -1);
  const live = session.status === 'live' || session.status === 'starting';
  const from = Math.max(0, Math.min(selected < 0 ? 0 : selected - LIST_WINDOW / 2, count - LIST_WINDOW));
  const shown = session.divergences.slice(from, from + LIST_WINDOW);
  return (
    <div className="screen session-screen" data-testid="session-screen" data-status={session.status}>
      <div className="toolbar session-bar">
        <span className={`session-status ${session.status}`} data-testid="session-status">
          {session.status === 'live' ? '● live' : session.status === 'starting' ? 'starting…' : session.status === 'failed' ? 'failed' : 'ended'}
        </span>
        <span className="session-title">{session.title}</span>
        {session.progress && <Progress done={session.progress.done} total={session.progress.total} unit="bytes" />}
        {live && session.source !== 'replay' && <BoardControls onCommand={onCommand} />}
        {live && (
          <button onClick={onStop} data-testid="session-stop">
            {session.source === 'replay' ? 'Cancel' : 'Disconnect'}
          </button>
        )}
        <label className="field">
          <span>radix</span>
          <select value={radix} onChange={(e) => setRadix(e.target.value as Radix)} data-testid="session-radix">
            <option value="dec">decimal</option>
            <option value="hex">hex</option>
            <option value="bin">binary</option>
          </select>
        </label>
        {live && (
          <label className="field check">
            <input type="checkbox" checked={follow} onChange={(e) => setFollow(e.target.checked)} /> <span>follow</span>
          </label>
        )}
      </div>
      <CounterStrip counters={session.counters} />
      {session.reason && session.status !== 'live' && <div className={`banner ${session.status === 'failed' ? 'error' : 'info'}`}>{session.status === 'failed' ? session.reason : `Session ended: ${session.reason}.`}</div>}
      {session.capped && <div className="banner info">The waveform stopped growing at its memory limit; counters and divergences go on.</div>}
      <div className="session-main">
        <div className="session-wave">
          {wave && wave.cycles > 0 ? (
            <WaveCanvas sim={wave} radix={radix} expected={session.expected} expectedShown={session.diverged} markers={session.markers} focus={focus} resetKey={session.job} follow={follow && live} unit="sample" />
          ) : (
            <div className="screen-empty small">{live ? 'Waiting for frames from the board…' : 'No frames were received.'}</div>
          )}
        </div>
        <aside className="card divergence-panel" data-testid="divergence-panel">
          <div className="panel-head">
            <h2>
              Divergences <span className="count">{session.counters.divergences}</span>
            </h2>
            <div className="nav-buttons">
              <button onClick={() => step(-1)} disabled={count === 0} title="Previous divergence (p or [)" data-testid="div-prev">
                ◀ prev
              </button>
              <button onClick={() => step(1)} disabled={count === 0} title="Next divergence (n or ])" data-testid="div-next">
                next ▶
              </button>
            </div>
          </div>
          {count === 0 ? (
            <p className="muted small-note">{live ? 'None so far: every compared frame agrees with the model.' : 'None: every compared frame agreed with the model.'}</p>
          ) : (
            <>
              <p className="muted small-note">
                {selected >= 0 ? `${selected + 1} of ${count}` : `${count} listed`}
                {session.counters.divergences > count ? ` (the first ${count} of ${session.counters.divergences} are kept)` : ''} · keys n / p
              </p>
              <ol className="divergence-list" ref={listRef} data-testid="divergence-list">
                {shown.map((v, i) => {
                  const k = from + i;
                  return (
                    <li key={k} className={k === selected ? 'selected' : ''}>
                      <button onClick={() => select(k)} data-index={k} data-sample={v.sample}>
                        <span className="div-cycle">cycle {v.cycle}</span> <span className="div-signal">{v.signal}</span>{' '}
                        <span className="div-values">
                          <span className="model-text">{v.expected}</span> → <span className="board-text">{v.actual}</span>
                        </span>
                      </button>
                    </li>
                  );
                })}
              </ol>
            </>
          )}
          {d && <DivergenceDetail d={d} />}
        </aside>
      </div>
      <div className="session-lower">
        <section className="card">
          <h2>
            State diagram{' '}
            {d && (
              <span className="muted legend">
                · <span className="board-text">board: {d.state}</span> · <span className="model-text">expected: {d.expectedState ?? '—'}</span>
              </span>
            )}
          </h2>
          <div className="diagram-scroll">{diagram ? <StateDiagram diagram={diagram} actual={d ? stateIndex(d.state) : null} expected={d ? stateIndex(d.expectedState) : null} /> : <p className="muted">Laying out…</p>}</div>
        </section>
        <section className="card session-notes" data-testid="session-notes">
          <h2>Diagnosis and link</h2>
          {session.hints.length > 0 ? (
            <ul className="hint-list" data-testid="hints">
              {session.hints.map((h, i) => (
                <li key={i}>
                  <strong>{h.text}</strong>
                  <span className="muted"> {h.evidence}</span>
                </li>
              ))}
            </ul>
          ) : (
            <p className="muted small-note">{live ? 'Likely causes are worked out from all divergences when the session ends.' : 'No likely cause stood out.'}</p>
          )}
          {session.summary && <p className="mono-line">{session.summary}</p>}
          {session.capture && <p className="small-note">capture: <span className="mono-line">{session.capture}</span></p>}
          {session.notes.map((n, i) => (
            <p key={i} className="small-note muted">
              {n}
            </p>
          ))}
          {session.log.length > 0 && (
            <ul className="link-log">
              {session.log.slice(-40).map((l, i) => (
                <li key={i} className={l.kind}>
                  <span className="muted">sample {l.sample}</span> {l.text}
                </li>
              ))}
            </ul>
          )}
        </section>
      </div>
    </div>
  );
}
