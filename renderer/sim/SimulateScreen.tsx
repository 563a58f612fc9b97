// The Simulate screen: runs the golden model on seeded random stimulus or a pasted CSV, and shows
// the trace as a waveform. Long runs stream in chunks with progress and can be cancelled; stimulus
// problems come back as diagnostics naming the row and column.
import type { Dispatch, SetStateAction } from 'react';
import { MAX_SIM_CYCLES, type CheckResultView, type DiagnosticView, type JobEvent, type SimulationView } from '../../core/services/api';
import { call, jobsAvailable, startJob, type JobHandle } from '../api/client';
import type { DesignDoc } from '../app/App';
import { Progress } from '../app/Progress';
import { WaveCanvas, type Radix } from './WaveCanvas';
import { appendChunk } from './waveform';

export interface SimState {
  source: 'random' | 'csv';
  cycles: number;
  seed: number;
  csv: string;
  radix: Radix;
  result: SimulationView | null;
  running: boolean;
  error: string | null;
  /** Cycles done of the running job. */
  progress: { done: number; total: number } | null;
  job: JobHandle | null;
  /** Counts runs, so the waveform resets its view for a new run but not for each chunk of one. */
  runId: number;
}

/**
 * Grows the run's waveform from a simulation event, in place (outside React's state updaters, which may
 * run more than once): the arrays grow, and a new wrapper object tells the canvas to redraw.
 */
export function foldSimData(acc: SimulationView | null, e: JobEvent): SimulationView | null {
  if (e.type === 'sim-start') return { cycles: 0, stateNames: e.stateNames, tracks: e.tracks.map((t) => ({ ...t, at: [], values: [] })), diagnostics: [], stimulusSource: null };
  if (e.type === 'sim-chunk' && acc) {
    appendChunk(acc.tracks, e.tracks);
    return { ...acc, cycles: e.cycles };
  }
  return acc;
}

/** The screen state after a simulation event; `data` is the waveform as folded so far. Pure. */
export function applySimEvent(s: SimState, e: JobEvent, data: SimulationView | null): SimState {
  switch (e.type) {
    case 'sim-start':
    case 'sim-chunk':
      return { ...s, result: data };
    case 'progress':
      return { ...s, progress: { done: e.done, total: e.total ?? e.done } };
    case 'failed':
      return { ...s, running: false, job: null, progress: null, result: e.diagnostics.length ? { cycles: 0, stateNames: [], tracks: [], diagnostics: e.diagnostics, stimulusSource: 'stimulus' } : s.result, error: e.diagnostics.length ? null : e.error };
    case 'cancelled':
      return { ...s, running: false, job: null, progress: null, error: `cancelled after ${s.result?.cycles ?? 0} cycles${s.result?.cycles ? '; the waveform shows those' : ''}` };
    case 'done':
      return { ...s, running: false, job: null, progress: null };
    default:
      return s;
  }
}

interface Props {
  doc: DesignDoc | null;
  check: CheckResultView | null;
  sim: SimState;
  setSim: Dispatch<SetStateAction<SimState>>;
}

/** A starting CSV: the header the design needs and a few quiet rows to edit. */
export function csvTemplate(inputs: { name: string }[]): string {
  const header = inputs.map((i) => i.name).join(',');
  const row = inputs.map(() => '0').join(',');
  return [header, row, row, row, row].join('\n') + '\n';
}

function DiagnosticList({ items, what }: { items: DiagnosticView[]; what: string }) {
  return (
    <ul className="diag-list compact" data-testid="sim-diagnostics">
      {items.map((d, i) => (
        <li key={i} className={`diag ${d.severity}`}>
          <span className="diag-where">
            {what} line {d.line}:{d.col}
          </span>{' '}
          <span className="diag-message">{d.message}</span> <span className="diag-hint">— {d.hint}</span>
        </li>
      ))}
    </ul>
  );
}

export function SimulateScreen({ doc, check, sim, setSim }: Props) {
  const m = check?.machine ?? null;
  const set = (patch: Partial<SimState>) => setSim((s) => ({ ...s, ...patch }));

  const run = async () => {
    if (!doc) return;
    set({ running: true, error: null, progress: null, runId: sim.runId + 1 });
    const stimulus = sim.source === 'random' ? { kind: 'random' as const, cycles: sim.cycles, seed: sim.seed } : { kind: 'csv' as const, csv: sim.csv };
    if (await jobsAvailable()) {
      setSim((s) => ({ ...s, result: null }));
      let data: SimulationView | null = null;
      const r = await startJob({ kind: 'simulate', text: doc.text, file: doc.file, stimulus }, (e) => {
        data = foldSimData(data, e);
        const now = data;
        setSim((s) => applySimEvent(s, e, now));
      });
      if (r.ok) set({ job: r.value });
      else set({ running: false, error: r.error.message });
      return;
    }
    // Without a push channel (plain HTTP) the whole run comes back in one reply.
    const r = await call('design.simulate', { text: doc.text, file: doc.file, stimulus });
    setSim((s) => ({ ...s, running: false, result: r.ok ? r.value : s.result, error: r.ok ? null : r.error.message }));
  };

  if (!doc || !check) return <div className="screen-empty">Checking the design…</div>;
  if (!m) return <div className="screen-empty">The design has errors; fix them on the Design screen before simulating.</div>;
  const res = sim.result;
  const cyclesOk = Number.isInteger(sim.cycles) && sim.cycles >= 1 && sim.cycles <= MAX_SIM_CYCLES;
  return (
    <div className="screen sim-screen">
      <div className="toolbar">
        <div className="segmented" role="radiogroup" aria-label="Stimulus">
          <button role="radio" aria-checked={sim.source === 'random'} className={sim.source === 'random' ? 'on' : ''} onClick={() => set({ source: 'random' })}>
            Random
          </button>
          <button role="radio" aria-checked={sim.source === 'csv'} className={sim.source === 'csv' ? 'on' : ''} onClick={() => set({ source: 'csv', csv: sim.csv || csvTemplate(m.inputs) })} data-testid="source-csv">
            CSV
          </button>
        </div>
        {sim.source === 'random' && (
          <>
            <label className="field">
              <span>cycles</span>
              <input type="number" min={1} max={MAX_SIM_CYCLES} value={sim.cycles} onChange={(e) => set({ cycles: Number(e.target.value) })} className={cyclesOk ? '' : 'invalid'} data-testid="sim-cycles" />
            </label>
            <label className="field">
              <span>seed</span>
              <input type="number" min={0} max={4294967295} value={sim.seed} onChange={(e) => set({ seed: Number(e.target.value) })} data-testid="sim-seed" />
            </label>
          </>
        )}
        <button className="primary" onClick={run} disabled={sim.running || (sim.source === 'random' && !cyclesOk)} data-testid="sim-run">
          {sim.running ? 'Running…' : 'Run model'}
        </button>
        {sim.running && sim.job && (
          <button onClick={() => void sim.job?.cancel()} data-testid="sim-cancel">
            Cancel
          </button>
        )}
        {sim.progress && <Progress done={sim.progress.done} total={sim.progress.total} unit="cycles" />}
        <label className="field">
          <span>radix</span>
          <select value={sim.radix} onChange={(e) => set({ radix: e.target.value as Radix })} data-testid="sim-radix">
            <option value="dec">decimal</option>
            <option value="hex">hex</option>
            <option value="bin">binary</option>
          </select>
        </label>
        {!cyclesOk && sim.source === 'random' && <span className="inline-error">cycles: 1 to {MAX_SIM_CYCLES}</span>}
      </div>
      {sim.source === 'csv' && (
        <div className="csv-box">
          <textarea value={sim.csv} onChange={(e) => set({ csv: e.target.value })} spellCheck={false} aria-label="Stimulus CSV" data-testid="sim-csv" />
          <p className="muted">
            One column per input ({m.inputs.map((i) => i.name).join(', ')}), one row per cycle. Values: 12, -3, 0x1F, 0b101.
          </p>
        </div>
      )}
      {sim.error && <div className="banner error">{sim.error}</div>}
      {res && res.diagnostics.length > 0 && <DiagnosticList items={res.diagnostics} what={res.stimulusSource === 'stimulus' ? 'stimulus' : 'design'} />}
      {res && res.cycles > 0 ? (
        <WaveCanvas sim={res} radix={sim.radix} resetKey={sim.runId} />
      ) : (
        !res && <div className="screen-empty small">Run the model to see its waveform: inputs, state, registers and outputs, cycle by cycle.</div>
      )}
    </div>
  );
}
