// The bench safety panel: supply limits and polarity, adapter I/O voltage, ESD handling, no hot-plugging,
// and the deferral to the lab's rules and the board maker's documentation. Reachable from the header at all times.
import { useEffect, useRef, useState } from 'react';
import type { SafetyNotes } from '../../core/services/api';
import { call } from '../api/client';

const ACK_KEY = 'twinstep.safety.acknowledged';
/** Kept per window session (sessionStorage), so the notes come up again before the first connect of every session. */
let acknowledgedHere = false;

export function safetyAcknowledged(): boolean {
  if (acknowledgedHere) return true;
  try {
    return sessionStorage.getItem(ACK_KEY) === '1';
  } catch {
    return false;
  }
}

function acknowledge(): void {
  acknowledgedHere = true;
  try {
    sessionStorage.setItem(ACK_KEY, '1');
  } catch {
    // Storage may be unavailable; this window still remembers it until it is closed.
  }
}

export function SafetyNotesView({ notes }: { notes: SafetyNotes }) {
  return (
    <>
      {notes.sections.map((s) => (
        <section key={s.id} className="safety-section">
          <h3>{s.heading}</h3>
          <ul>
            {s.items.map((item, i) => (
              <li key={i}>{item}</li>
            ))}
          </ul>
        </section>
      ))}
      <p className="safety-deferral">{notes.deferral}</p>
    </>
  );
}

export function useSafetyNotes(): { notes: SafetyNotes | null; problem: string | null } {
  const [notes, setNotes] = useState<SafetyNotes | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  useEffect(() => {
    void call('safety.notes', undefined).then((r) => (r.ok ? setNotes(r.value) : setProblem(r.error.message)));
  }, []);
  return { notes, problem };
}

export function SafetyPanel({ onClose, onAcknowledge }: { onClose(): void; onAcknowledge?(): void }) {
  const { notes, problem } = useSafetyNotes();
  const closeButton = useRef<HTMLButtonElement>(null);
  useEffect(() => {
    closeButton.current?.focus();
    const onKey = (e: KeyboardEvent) => e.key === 'Escape' && onClose();
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, [onClose]);
  return (
    <div className="overlay" onClick={onClose}>
      <div className="safety-panel" role="dialog" aria-modal="true" aria-labelledby="safety-title" onClick={(e) => e.stopPropagation()} data-testid="safety-panel">
        <h2 id="safety-title">{notes?.title ?? 'Bench safety'}</h2>
        {problem && <div className="banner error">The safety notes could not be loaded ({problem}). Follow your lab's rules and the board maker's documentation.</div>}
        {notes && <SafetyNotesView notes={notes} />}
        <div className="dialog-buttons">
          <button
            className="primary"
            onClick={() => {
              acknowledge();
              onAcknowledge?.();
              onClose();
            }}
          >
            I have read these notes
          </button>
          <button ref={closeButton} onClick={onClose}>
            Close
          </button>
        </div>
      </div>
    </div>
  );
}
