// Lays the state diagram out with ELK's layered algorithm: states as boxes sized to their text,
// transitions as routed edges with their condition and actions as labels. Text sizes are estimated
// for the monospace face the diagram is drawn in, so layout needs no DOM.
import type { ELK, ElkExtendedEdge, ElkNode } from 'elkjs/lib/elk-api';
import type { MachineSummary } from '../../core/services/api';

export const CHAR_W = 7.2;
export const LINE_H = 15;
const NAME_H = 26;

export interface DiagramNode {
  id: string;
  index: number;
  x: number;
  y: number;
  w: number;
  h: number;
  name: string;
  initial: boolean;
  actions: string[];
}

export interface DiagramEdge {
  id: string;
  from: number;
  to: number;
  points: { x: number; y: number }[];
  label: { x: number; y: number; w: number; h: number; lines: string[] } | null;
}

export interface Diagram {
  width: number;
  height: number;
  nodes: DiagramNode[];
  edges: DiagramEdge[];
}

/** Label lines of a transition: priority and condition, then its actions. */
export function edgeLabelLines(e: MachineSummary['edges'][number], siblings: number): string[] {
  const cond = e.condition ?? (siblings > 1 ? 'otherwise' : 'always');
  const head = siblings > 1 ? `${e.priority + 1}. ${cond}` : cond;
  return e.actions.length ? [head, '/ ' + e.actions.join('; ')] : [head];
}

function textWidth(lines: string[]): number {
  return Math.max(...lines.map((l) => l.length), 1) * CHAR_W;
}

/** State indices with the reset state first, the rest as written. */
export function stateOrder(m: MachineSummary): number[] {
  const first = m.states.findIndex((s) => s.initial);
  const all = m.states.map((_, i) => i);
  return first > 0 ? [first, ...all.filter((i) => i !== first)] : all;
}

/** The ELK input graph; exported so tests can check sizes without running the layout. */
export function elkGraph(m: MachineSummary): ElkNode {
  const outCount = new Map<number, number>();
  for (const e of m.edges) outCount.set(e.from, (outCount.get(e.from) ?? 0) + 1);
  return {
    id: 'root',
    layoutOptions: {
      'elk.algorithm': 'layered',
      'elk.direction': 'RIGHT',
      'elk.edgeRouting': 'ORTHOGONAL',
      'elk.spacing.nodeNode': '36',
      'elk.layered.spacing.nodeNodeBetweenLayers': '56',
      'elk.spacing.edgeLabel': '4',
      'elk.spacing.edgeEdge': '14',
      'elk.layered.spacing.edgeNodeBetweenLayers': '18',
      'elk.edgeLabels.placement': 'CENTER',
      'elk.padding': '[top=20,left=34,bottom=20,right=20]',
      // Read the machine in the order it was written, reset state first, so the diagram flows from it.
      'elk.layered.cycleBreaking.strategy': 'MODEL_ORDER',
      'elk.layered.considerModelOrder.strategy': 'NODES_AND_EDGES',
    },
    children: stateOrder(m).map((i) => {
      const s = m.states[i];
      const lines = [s.name, ...s.actions];
      return { id: `s${i}`, width: Math.max(96, textWidth(lines) + 24), height: NAME_H + s.actions.length * LINE_H + (s.actions.length ? 8 : 0) };
    }),
    edges: m.edges.map((e, k): ElkExtendedEdge => {
      const lines = edgeLabelLines(e, outCount.get(e.from) ?? 1);
      return {
        id: `e${k}`,
        sources: [`s${e.from}`],
        targets: [`s${e.to}`],
        labels: [{ id: `l${k}`, text: lines.join('\n'), width: textWidth(lines) + 6, height: lines.length * LINE_H + 2 }],
      };
    }),
  };
}

let elk: Promise<ELK> | null = null;

/** ELK is large; it is loaded the first time a diagram is drawn, not with the app. */
function getElk(): Promise<ELK> {
  return (elk ??= import('elkjs/lib/elk.bundled.js').then((mod) => new mod.default()));
}

export async function layoutMachine(m: MachineSummary): Promise<Diagram> {
  const engine = await getElk();
  const outCount = new Map<number, number>();
  for (const e of m.edges) outCount.set(e.from, (outCount.get(e.from) ?? 0) + 1);
  const g = await engine.layout(elkGraph(m));
  const nodes: DiagramNode[] = (g.children ?? []).map((c) => {
    const i = Number(c.id.slice(1));
    return {
    id: c.id,
    index: i,
    x: c.x ?? 0,
    y: c.y ?? 0,
    w: c.width ?? 0,
    h: c.height ?? 0,
    name: m.states[i].name,
    initial: m.states[i].initial,
    actions: m.states[i].actions,
    };
  });
  const edges: DiagramEdge[] = ((g.edges ?? []) as ElkExtendedEdge[]).map((e, k) => {
    const sec = e.sections?.[0];
    const points = sec ? [sec.startPoint, ...(sec.bendPoints ?? []), sec.endPoint] : [];
    const l = e.labels?.[0];
    const src = m.edges[k];
    return {
      id: e.id,
      from: src.from,
      to: src.to,
      points,
      label: l ? { x: l.x ?? 0, y: l.y ?? 0, w: l.width ?? 0, h: l.height ?? 0, lines: edgeLabelLines(src, outCount.get(src.from) ?? 1) } : null,
    };
  });
  return { width: g.width ?? 0, height: g.height ?? 0, nodes, edges };
}
