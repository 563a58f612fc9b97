// The Bench screen: where a board (or the emulator) will be connected over serial. That comes with
// the probe; until then this screen says so plainly and keeps the safety notes at hand.
import { SafetyNotesView, useSafetyNotes } from '../safety/SafetyPanel';

export function BenchScreen({ onShowSafety }: { onShowSafety(): void }) {
  const { notes } = useSafetyNotes();
  return (
    <div className="screen bench-screen">
      <section className="card not-yet" data-testid="bench-not-yet">
        <h2>Bench: coming with the probe</h2>
        <p>
          Connecting a board over a USB-UART adapter, streaming its state and comparing every cycle against the model arrives together with the UART probe. Nothing on this screen talks to hardware
          yet, and no port is opened.
        </p>
        <p>
          Before the first connection the safety notes below are shown again; they stay one click away under <button className="link" onClick={onShowSafety}>Bench safety</button> in the header.
        </p>
      </section>
      {notes && (
        <section className="card">
          <h2>{notes.title}</h2>
          <SafetyNotesView notes={notes} />
        </section>
      )}
    </div>
  );
}
