// The Machine screen: the state diagram laid out automatically, the machine's signals, and the
// controller/datapath synthesis views (encoding chooser, cost comparison, equations) when the build has them.
import { useEffect, useState } from 'react';
import type { CheckResultView, Encoding, MachineSummary, ResultOf } from '../../core/services/api';
import { call } from '../api/client';
import type { DesignDoc } from '../app/App';
import { layoutMachine, type Diagram } from './layout';
import { StateDiagram } from './StateDiagram';

interface Props {
  doc: DesignDoc | null;
  check: CheckResultView | null;
  synthAvailable: boolean;
}

function typeText(s: { width: number; signed: boolean }): string {
  return s.width === 1 && !s.signed ? 'bit' : `${s.signed ? 's' : 'u'}${s.width}`;
}

function SignalTable({ m }: { m: MachineSummary }) {
  const rows = [...m.inputs.map((s) => ({ ...s, kind: 'in' })), ...m.outputs.map((s) => ({ ...s, kind: 'out' })), ...m.registers.map((s) => ({ ...s, kind: 'reg' }))];
  return (
    <table className="grid-table">
      <thead>
        <tr>
          <th>kind</th>
          <th>name</th>
          <th>type</th>
        </tr>
      </thead>
      <tbody>
        {rows.map((r) => (
          <tr key={r.kind + r.name}>
            <td className={`kind-${r.kind}`}>{r.kind}</td>
            <td>{r.name}</td>
            <td>{typeText(r)}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

const ENCODINGS: { id: Encoding; label: string }[] = [
  { id: 'binary', label: 'Binary' },
  { id: 'gray', label: 'Gray' },
  { id: 'onehot', label: 'One-hot' },
  { id: 'custom', label: 'Custom' },
];

/** Encoding and equations first: they change with the chooser; the table and datapath do not. */
const SECTION_ORDER = ['encoding', 'equations', 'full-decode', 'controller', 'datapath'];

function SynthPanel({ doc }: { doc: DesignDoc }) {
  const [encoding, setEncoding] = useState<Encoding>('binary');
  const [result, setResult] = useState<ResultOf<'synth.run'> | null>(null);
  const [compare, setCompare] = useState<ResultOf<'synth.compare'> | null>(null);
  const [problem, setProblem] = useState<string | null>(null);

  useEffect(() => {
    let live = true;
    void call('synth.compare', { text: doc.text, file: doc.file }).then((r) => live && (r.ok ? setCompare(r.value) : setProblem(r.error.message)));
    return () => {
      live = false;
    };
  }, [doc.text, doc.file]);

  useEffect(() => {
    let live = true;
    void call('synth.run', { text: doc.text, file: doc.file, encoding }).then((r) => live && (r.ok ? setResult(r.value) : setProblem(r.error.message)));
    return () => {
      live = false;
    };
  }, [doc.text, doc.file, encoding]);

  const cost = result?.sections.find((s) => s.id === 'cost');
  const rank = (id: string) => {
    const k = SECTION_ORDER.indexOf(id);
    return k < 0 ? SECTION_ORDER.length : k;
  };
  const ordered = (result?.sections ?? []).filter((s) => s.id !== 'cost').sort((a, b) => rank(a.id) - rank(b.id));
  return (
    <section className="card synth" data-testid="synth-panel">
      <h2>Controller and datapath</h2>
      {problem && <div className="banner error">{problem}</div>}
      <div className="segmented" role="radiogroup" aria-label="State encoding">
        {ENCODINGS.map((e) => {
          const col = compare?.columns.find((c) => c.label === e.id);
          return (
            <button key={e.id} role="radio" aria-checked={encoding === e.id} className={encoding === e.id ? 'on' : ''} disabled={col ? !col.available : false} title={col?.note} onClick={() => setEncoding(e.id)} data-testid={`encoding-${e.id}`}>
              {e.label}
            </button>
          );
        })}
      </div>
      {compare && compare.columns.length > 0 && (
        <table className="grid-table compare" data-testid="encoding-compare">
          <thead>
            <tr>
              <th>cost</th>
              {compare.columns.map((c) => (
                <th key={c.label} className={c.encoding === encoding ? 'on' : ''} title={c.note}>
                  {c.label}
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {compare.metricNames.map((mn) => {
              const values = compare.columns.filter((c) => c.available).map((c) => c.metrics[mn.key]);
              const best = Math.min(...values);
              return (
                <tr key={mn.key}>
                  <td>{mn.label}</td>
                  {compare.columns.map((c) => (
                    <td key={c.label} className={`${c.encoding === encoding ? 'on' : ''} ${c.available && c.metrics[mn.key] === best ? 'best' : ''}`}>
                      {c.available ? (c.metrics[mn.key] ?? '—') : '—'}
                    </td>
                  ))}
                </tr>
              );
            })}
          </tbody>
        </table>
      )}
      {compare?.columns.some((c) => !c.available) && (
        <p className="muted small-note">{compare.columns.filter((c) => !c.available).map((c) => c.note).join(' ')}</p>
      )}
      {result?.diagnostics.map((d, i) => (
        <div key={i} className="banner error">
          {d.message}
        </div>
      ))}
      {cost && <p className="synth-cost" data-testid="synth-cost">{cost.title}</p>}
      <div className="synth-grid">
        {ordered.map((s) => (
          <div key={s.id} className={`synth-section sec-${s.id}`}>
            <h3>{s.title}</h3>
            <pre className="mono-block" data-testid={`synth-${s.id}`}>
              {s.text}
            </pre>
          </div>
        ))}
      </div>
    </section>
  );
}

export function MachineScreen({ doc, check, synthAvailable }: Props) {
  const [diagram, setDiagram] = useState<Diagram | null>(null);
  const [layoutProblem, setLayoutProblem] = useState<string | null>(null);
  const m = check?.machine ?? null;

  useEffect(() => {
    if (!m) return;
    let live = true;
    layoutMachine(m).then(
      (d) => live && (setDiagram(d), setLayoutProblem(null)),
      (e: unknown) => live && setLayoutProblem(`the diagram could not be laid out: ${e instanceof Error ? e.message : String(e)}`),
    );
    return () => {
      live = false;
    };
  }, [m]);

  if (!doc || !check) return <div className="screen-empty">Checking the design…</div>;
  if (!m) {
    const n = check.diagnostics.filter((d) => d.severity === 'error').length;
    return (
      <div className="screen-empty">
        The design has {n} error{n === 1 ? '' : 's'}. Fix {n === 1 ? 'it' : 'them'} on the Design screen to see the machine.
      </div>
    );
  }
  return (
    <div className="screen machine-screen">
      <div className="machine-top">
        <section className="card diagram-card">
          <h2>
            State diagram <span className="muted">· {m.states.length} states, {m.edges.length} transitions · numbers give the order conditions are tried</span>
          </h2>
          {layoutProblem && <div className="banner error">{layoutProblem}</div>}
          <div className="diagram-scroll">{diagram ? <StateDiagram diagram={diagram} /> : <p className="muted">Laying out…</p>}</div>
        </section>
        <section className="card signals-card">
          <h2>Signals</h2>
          <SignalTable m={m} />
        </section>
      </div>
      {synthAvailable ? (
        <SynthPanel doc={doc} />
      ) : (
        <section className="card not-yet" data-testid="synth-unavailable">
          <h2>Controller and datapath</h2>
          <p>Synthesis (transition table, state encodings and their costs, next-state and output equations, datapath components) is not yet available in this build.</p>
        </section>
      )}
    </div>
  );
}
