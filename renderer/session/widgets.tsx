// Pieces the Bench and Session screens share: the live counters and the board controls (run, halt,
// step N, reset), which send probe commands to the board of the running session.
import { useState } from 'react';
import type { Counters } from '../../core/services/api';

const COUNTERS: { key: keyof Counters; label: string; bad?: boolean }[] = [
  { key: 'cycleFrames', label: 'cycles' },
  { key: 'framesPerSec', label: 'frames/s' },
  { key: 'crcErrors', label: 'CRC errors', bad: true },
  { key: 'drops', label: 'dropped frames', bad: true },
  { key: 'divergences', label: 'divergences', bad: true },
];

export function CounterStrip({ counters }: { counters: Counters }) {
  return (
    <div className="counters" data-testid="counters">
      {COUNTERS.map((c) => (
        <div key={c.key} className={`counter ${c.bad && counters[c.key] > 0 ? 'bad' : ''}`} data-counter={c.key} data-value={counters[c.key]}>
          <span className="counter-value">{counters[c.key].toLocaleString('en')}</span>
          <span className="counter-label">{c.label}</span>
        </div>
      ))}
      {counters.framingErrors > 0 && (
        <div className="counter bad" data-counter="framingErrors">
          <span className="counter-value">{counters.framingErrors.toLocaleString('en')}</span>
          <span className="counter-label">framing errors</span>
        </div>
      )}
    </div>
  );
}

export function BoardControls({ onCommand }: { onCommand(cmd: 'run' | 'halt' | 'reset' | { step: number }): void }) {
  const [n, setN] = useState(1);
  const ok = Number.isInteger(n) && n >= 1 && n <= 65535;
  return (
    <span className="board-controls">
      <button onClick={() => onCommand('run')} title="Free-running lockstep" data-testid="cmd-run">
        Run
      </button>
      <button onClick={() => onCommand('halt')} data-testid="cmd-halt">
        Halt
      </button>
      <button onClick={() => ok && onCommand({ step: n })} disabled={!ok} data-testid="cmd-step">
        Step
      </button>
      <input type="number" min={1} max={65535} value={n} onChange={(e) => setN(Number(e.target.value))} className={ok ? 'step-count' : 'step-count invalid'} aria-label="cycles to step" />
      <button onClick={() => onCommand('reset')} data-testid="cmd-reset">
        Reset
      </button>
    </span>
  );
}
