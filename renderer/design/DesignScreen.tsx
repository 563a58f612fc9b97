// The Design screen: the editor, the checker's diagnostics as a clickable list, and a short
// summary of the machine once it checks. Files come in through the browser's own file picker.
import { useEffect, useRef, useState, type ChangeEvent } from 'react';
import type { CheckResultView, ResultOf } from '../../core/services/api';
import { call } from '../api/client';
import type { DesignDoc } from '../app/App';
import { Editor, type EditorHandle } from './Editor';

interface Props {
  doc: DesignDoc | null;
  check: CheckResultView | null;
  onEdit(text: string): void;
  onOpen(file: string, text: string): void;
  onOpenDemo(id: string): void;
}

const MAX_OPEN_BYTES = 1_000_000;

function download(file: string, text: string): void {
  const url = URL.createObjectURL(new Blob([text], { type: 'text/plain' }));
  const a = document.createElement('a');
  a.href = url;
  a.download = file;
  a.click();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

export function DesignScreen({ doc, check, onEdit, onOpen, onOpenDemo }: Props) {
  const editor = useRef<EditorHandle>(null);
  const picker = useRef<HTMLInputElement>(null);
  const [demos, setDemos] = useState<ResultOf<'files.listDemos'>['demos']>([]);
  const [openProblem, setOpenProblem] = useState<string | null>(null);

  useEffect(() => {
    void call('files.listDemos', undefined).then((r) => r.ok && setDemos(r.value.demos));
  }, []);

  const pickFile = async (e: ChangeEvent<HTMLInputElement>) => {
    const f = e.target.files?.[0];
    e.target.value = '';
    if (!f) return;
    if (f.size > MAX_OPEN_BYTES) return setOpenProblem(`${f.name} is ${f.size} bytes; design files are at most ${MAX_OPEN_BYTES} bytes`);
    setOpenProblem(null);
    onOpen(f.name, await f.text());
  };

  if (!doc) return <div className="screen-empty">Opening the demo design…</div>;
  const diagnostics = check?.diagnostics ?? [];
  const m = check?.machine;
  return (
    <div className="screen design-screen">
      <div className="toolbar">
        <label className="field">
          <span>Demo</span>
          <select value="" onChange={(e) => e.target.value && onOpenDemo(e.target.value)} aria-label="Open a demo design">
            <option value="">open a demo…</option>
            {demos.map((d) => (
              <option key={d.id} value={d.id} title={d.summary}>
                {d.file}
              </option>
            ))}
          </select>
        </label>
        <button onClick={() => picker.current?.click()}>Open file…</button>
        <input ref={picker} type="file" accept=".tsm,text/plain" hidden onChange={pickFile} />
        <button onClick={() => download(doc.file, doc.text)}>Save a copy</button>
        {openProblem && <span className="inline-error">{openProblem}</span>}
      </div>
      <div className="design-split">
        <Editor ref={editor} text={doc.text} diagnostics={diagnostics} onChange={onEdit} />
        <aside className="side-panel">
          <h2>Diagnostics</h2>
          {diagnostics.length === 0 ? (
            <p className="muted" data-testid="no-diagnostics">
              {check ? 'No errors or warnings.' : 'Checking…'}
            </p>
          ) : (
            <ul className="diag-list" data-testid="diagnostics">
              {diagnostics.map((d, i) => (
                <li key={i} className={`diag ${d.severity}`}>
                  <button onClick={() => editor.current?.reveal(d.line, d.col)}>
                    <span className="diag-where">
                      {d.severity} · line {d.line}:{d.col}
                    </span>
                    <span className="diag-message">{d.message}</span>
                    <span className="diag-hint">{d.hint}</span>
                  </button>
                </li>
              ))}
            </ul>
          )}
          {m && (
            <>
              <h2>Machine</h2>
              <dl className="summary">
                <dt>name</dt>
                <dd>{m.name}</dd>
                <dt>clock</dt>
                <dd>{m.clockHz ? `${m.clockHz / 1e6} MHz` : 'not stated'}</dd>
                <dt>states</dt>
                <dd>{m.states.length}</dd>
                <dt>inputs</dt>
                <dd>{m.inputs.map((s) => s.name).join(', ') || '—'}</dd>
                <dt>outputs</dt>
                <dd>{m.outputs.map((s) => s.name).join(', ') || '—'}</dd>
                <dt>registers</dt>
                <dd>{m.registers.map((s) => s.name).join(', ') || '—'}</dd>
              </dl>
            </>
          )}
        </aside>
      </div>
    </div>
  );
}
