// Draws a laid-out state diagram in SVG: rounded state boxes with their Moore actions, orthogonal
// transition edges with arrowheads, condition labels on a backing plate, and an entry arrow on the reset state.
import { PALETTE } from '../app/palette';
import type { Diagram } from './layout';
import { CHAR_W, LINE_H } from './layout';

function pathOf(points: { x: number; y: number }[]): string {
  return points.map((p, i) => `${i ? 'L' : 'M'}${p.x.toFixed(1)},${p.y.toFixed(1)}`).join(' ');
}

/**
 * `actual` and `expected` mark the board's state and the model's expected state of a divergence (the same
 * state when only a register or output differs); `highlight` marks one state plainly.
 */
export function StateDiagram({ diagram, highlight, actual, expected }: { diagram: Diagram; highlight?: number | null; actual?: number | null; expected?: number | null }) {
  const pad = 28;
  const w = diagram.width + pad;
  const h = diagram.height;
  return (
    <svg className="state-diagram" width={w} height={h} viewBox={`-${pad} 0 ${w} ${h}`} role="img" aria-label="State diagram" data-testid="state-diagram">
      <defs>
        <marker id="arrow" viewBox="0 0 10 10" refX="9" refY="5" markerWidth="8" markerHeight="8" orient="auto-start-reverse">
          <path d="M0,1 L9,5 L0,9 z" fill={PALETTE.muted} />
        </marker>
        <marker id="arrow-entry" viewBox="0 0 10 10" refX="9" refY="5" markerWidth="8" markerHeight="8" orient="auto">
          <path d="M0,1 L9,5 L0,9 z" fill={PALETTE.accent} />
        </marker>
      </defs>
      {diagram.edges.map((e) => (
        <path key={e.id} d={pathOf(e.points)} fill="none" stroke={PALETTE.muted} strokeWidth={1.3} markerEnd="url(#arrow)" />
      ))}
      {diagram.edges.map(
        (e) =>
          e.label && (
            <g key={`${e.id}-label`} className="edge-label">
              <rect x={e.label.x - 2} y={e.label.y} width={e.label.w + 2} height={e.label.h} rx={3} fill={PALETTE.bg} opacity={0.88} />
              {e.label.lines.map((line, i) => (
                <text key={i} x={e.label!.x + 1} y={e.label!.y + 12 + i * LINE_H} fill={i === 0 ? PALETTE.text : PALETTE.teal} fontSize={12}>
                  {line}
                </text>
              ))}
            </g>
          ),
      )}
      {diagram.nodes.map((n) => (
        <g key={n.id} className={`state-node ${highlight === n.index ? 'hot' : ''} ${actual === n.index ? 'actual' : ''} ${expected === n.index ? 'expected' : ''}`} data-state={n.name}>
          {n.initial && <path d={`M${n.x - 24},${n.y + 13} L${n.x - 1},${n.y + 13}`} stroke={PALETTE.accent} strokeWidth={1.6} markerEnd="url(#arrow-entry)" />}
          {expected === n.index && <rect x={n.x - 5} y={n.y - 5} width={n.w + 10} height={n.h + 10} rx={11} fill="none" stroke={PALETTE.model} strokeWidth={2} strokeDasharray="5 3" />}
          <rect
            x={n.x}
            y={n.y}
            width={n.w}
            height={n.h}
            rx={8}
            fill={actual === n.index ? 'rgba(255,107,107,0.16)' : PALETTE.panel2}
            stroke={actual === n.index ? PALETTE.error : n.initial ? PALETTE.accent : PALETTE.state}
            strokeWidth={actual === n.index || n.initial ? 2 : 1.4}
          />
          <text x={n.x + n.w / 2} y={n.y + 18} textAnchor="middle" fill={PALETTE.state} fontSize={13} fontWeight={700}>
            {n.name}
          </text>
          {n.actions.length > 0 && <line x1={n.x + 6} x2={n.x + n.w - 6} y1={n.y + 26} y2={n.y + 26} stroke={PALETTE.line} />}
          {n.actions.map((a, i) => (
            <text key={i} x={n.x + 10} y={n.y + 26 + 13 + i * LINE_H} fill={PALETTE.muted} fontSize={12} textLength={Math.min(a.length * CHAR_W, n.w - 20)} lengthAdjust="spacingAndGlyphs">
              {a}
            </text>
          ))}
        </g>
      ))}
    </svg>
  );
}
