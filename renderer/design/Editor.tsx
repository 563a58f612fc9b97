// The design editor: a transparent textarea over a syntax-coloured <pre>, with a gutter of line
// numbers and diagnostic markers, and each diagnostic's token underlined in place.
import { forwardRef, useImperativeHandle, useMemo, useRef, type KeyboardEvent } from 'react';
import type { DiagnosticView } from '../../core/services/api';
import { highlightLine, markSegments, type LineMark } from './highlight';

export interface EditorHandle {
  /** Puts the caret at a 1-based line and column and scrolls it into view. */
  reveal(line: number, col: number): void;
}

interface Props {
  text: string;
  diagnostics: DiagnosticView[];
  onChange(text: string): void;
}

const LINE_HEIGHT = 20;
const INDENT = '  ';

export const Editor = forwardRef<EditorHandle, Props>(function Editor({ text, diagnostics, onChange }, ref) {
  const area = useRef<HTMLTextAreaElement>(null);
  const scroller = useRef<HTMLDivElement>(null);
  const escaped = useRef(false);

  const lines = useMemo(() => text.split('\n'), [text]);
  const byLine = useMemo(() => {
    const m = new Map<number, DiagnosticView[]>();
    for (const d of diagnostics) m.set(d.line, [...(m.get(d.line) ?? []), d]);
    return m;
  }, [diagnostics]);

  useImperativeHandle(ref, () => ({
    reveal(line, col) {
      const ta = area.current;
      if (!ta) return;
      const offset = lines.slice(0, line - 1).reduce((n, l) => n + l.length + 1, 0) + Math.max(0, col - 1);
      ta.focus();
      ta.setSelectionRange(offset, offset);
      scroller.current?.scrollTo({ top: Math.max(0, (line - 4) * LINE_HEIGHT) });
    },
  }));

  // Tab indents (the language is line-based and indented); Escape then Tab leaves the editor.
  const onKeyDown = (e: KeyboardEvent<HTMLTextAreaElement>) => {
    if (e.key === 'Escape') {
      escaped.current = true;
      return;
    }
    if (e.key === 'Tab' && !escaped.current && !e.shiftKey) {
      e.preventDefault();
      const ta = e.currentTarget;
      const { selectionStart: s, selectionEnd: t } = ta;
      onChange(text.slice(0, s) + INDENT + text.slice(t));
      requestAnimationFrame(() => ta.setSelectionRange(s + INDENT.length, s + INDENT.length));
    }
    escaped.current = false;
  };

  return (
    <div className="editor" ref={scroller}>
      <div className="gutter" aria-hidden>
        {lines.map((_, i) => {
          const ds = byLine.get(i + 1);
          const sev = ds?.some((d) => d.severity === 'error') ? 'error' : ds ? 'warning' : '';
          return (
            <div key={i} className={`gutter-line ${sev}`} title={ds?.map((d) => `${d.severity}: ${d.message}`).join('\n')}>
              {sev && <span className="gutter-mark" />}
              {i + 1}
            </div>
          );
        })}
      </div>
      <div className="editor-body">
        <pre className="editor-highlight" aria-hidden>
          {lines.map((line, i) => {
            const marks: LineMark[] = (byLine.get(i + 1) ?? []).map((d) => ({ col: d.col, severity: d.severity }));
            return (
              <div key={i} className="code-line">
                {markSegments(highlightLine(line), marks).map((s, k) => (
                  <span key={k} className={`tok-${s.cls}${s.mark ? ` squiggle-${s.mark}` : ''}`}>
                    {s.text}
                  </span>
                ))}
                {'\n'}
              </div>
            );
          })}
        </pre>
        <textarea
          ref={area}
          className="editor-input"
          value={text}
          onChange={(e) => onChange(e.target.value)}
          onKeyDown={onKeyDown}
          spellCheck={false}
          autoCapitalize="off"
          autoComplete="off"
          autoCorrect="off"
          wrap="off"
          aria-label="Design text"
          data-testid="design-editor"
        />
      </div>
    </div>
  );
});
