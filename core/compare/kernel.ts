// The comparator's hot path: one generated function per design that reads a raw frame, checks it against
// the prediction made from the previous frame and predicts the next one. It only answers "all agree?";
// the reference path (reference.ts) finds and explains what differs.
import type { Machine } from '../ir/schema';
import { compileExpr } from '../model/compiled';
import type { FrameLayout } from '../protocol/frame';
import { fieldReadSource, readBig, type ProbeMap } from './probe-map';

/** Result bits of `check`. */
export const KERNEL_MISMATCH = 1;
/** The board's state code is no state's code: nothing can be predicted from this frame. */
export const KERNEL_ILLEGAL_STATE = 2;

export interface Kernel {
  /** Compare one raw cycle frame (header at 0, payload from 1); 0 when every signal agrees with the model. */
  check(raw: Uint8Array): number;
  /** The next frame is the first after reset: expect the reset state and reset register values. */
  expectReset(): void;
  /** Frames were lost: the next frame is compared on its own values only. */
  forget(): void;
  /** Per machine input: how many frames carried a value different from the frame before (base rates for diagnosis). */
  inputChanges(): number[];
  source: string;
}

const big = (w: number) => w > 32;
const lit = (bits: string, w: number) => (big(w) ? `${bits}n` : bits);

/**
 * The generated code keeps the prediction in closure variables (`pst`, `p0`...), so a frame costs one
 * pass of straight-line code and no allocation. Registers and inputs are read as r<k> and i<k> in
 * machine order, as compileExpr names them.
 */
export function kernelSource(m: Machine, layout: FrameLayout, map: ProbeMap): string {
  const read = (field: number) => fieldReadSource('raw', layout.offsets[field], layout.fields[field].width);
  const inputIndex = new Map(m.inputs.map((x, i) => [x.name, i]));
  const regIndex = new Map(m.registers.map((x, i) => [x.name, i]));
  const names = { input: (n: string) => `i${inputIndex.get(n)}`, reg: (n: string) => `r${regIndex.get(n)}` };
  const framed = new Map(map.outputs.map((o, k) => [m.outputs[o.output].name, k]));
  const useTable = map.stateWidth <= 16;
  const L: string[] = [];
  L.push('let has = 0, pst = 0;');
  m.registers.forEach((r, k) => L.push(`let p${k} = ${lit('0', r.type.width)};`));
  m.inputs.forEach((x, k) => L.push(`let l${k} = ${lit('0', x.type.width)}, c${k} = 0;`));
  L.push('function check(raw) {');
  m.inputs.forEach((_, k) => L.push(`  const i${k} = ${read(map.inputs[k])};`));
  m.inputs.forEach((_, k) => L.push(`  if (i${k} !== l${k}) { c${k}++; l${k} = i${k}; }`));
  L.push(`  const code = ${read(map.state)};`);
  L.push(useTable ? '  const st = code < stateTable.length ? stateTable[code] : -1;' : '  const st = stateMap.has(code) ? stateMap.get(code) : -1;');
  m.registers.forEach((_, k) => L.push(`  const r${k} = ${read(map.registers[k])};`));
  map.statuses.forEach((s, k) => L.push(`  const s${k} = ${read(s.field)};`));
  map.outputs.forEach((o, k) => L.push(`  const o${k} = ${read(o.field)};`));
  L.push('  let bad = 0;');
  const seq = ['st !== pst', ...m.registers.map((_, k) => `r${k} !== p${k}`)];
  L.push(`  if (has === 1 && (${seq.join(' || ')})) bad = 1;`);
  L.push('  if (st < 0) { has = 0; return bad | 2; }');
  map.statuses.forEach((s, k) => L.push(`  if (s${k} !== ${compileExpr(s.signal.expr, names)}) bad = 1;`));
  map.outputs.forEach((o, k) => L.push(`  let e${k} = ${m.outputs[o.output].defaultBits};`));
  m.registers.forEach((_, k) => L.push(`  let n${k} = r${k};`));
  L.push('  let ns = st;');
  L.push('  switch (st) {');
  m.states.forEach((s, si) => {
    L.push(`    case ${si}: {`);
    for (const o of s.outputs) if (framed.has(o.output)) L.push(`      e${framed.get(o.output)} = ${compileExpr(o.value, names)};`);
    for (const t of s.transfers) L.push(`      n${regIndex.get(t.register)} = ${compileExpr(t.value, names)};`);
    s.transitions.forEach((t, k) => {
      L.push(`      ${k === 0 ? 'if' : 'else if'} (${t.condition ? compileExpr(t.condition, names) : 'true'}) {`);
      L.push(`        ns = ${t.target};`);
      for (const o of t.outputs) if (framed.has(o.output)) L.push(`        e${framed.get(o.output)} = ${compileExpr(o.value, names)};`);
      for (const x of t.transfers) L.push(`        n${regIndex.get(x.register)} = ${compileExpr(x.value, names)};`);
      L.push('      }');
    });
    L.push('      break;');
    L.push('    }');
  });
  L.push('  }');
  if (map.outputs.length) L.push(`  if (${map.outputs.map((_, k) => `o${k} !== e${k}`).join(' || ')}) bad = 1;`);
  L.push('  pst = ns;');
  m.registers.forEach((_, k) => L.push(`  p${k} = n${k};`));
  L.push('  has = 1;');
  L.push('  return bad;');
  L.push('}');
  L.push('function expectReset() {');
  L.push(`  has = 1; pst = ${m.resetState};`);
  m.registers.forEach((r, k) => L.push(`  p${k} = ${lit(r.resetBits, r.type.width)};`));
  L.push('}');
  L.push('function forget() { has = 0; }');
  L.push(`function inputChanges() { return [${m.inputs.map((_, k) => `c${k}`).join(', ')}]; }`);
  L.push('return { check, expectReset, forget, inputChanges };');
  return L.join('\n');
}

export function compileKernel(m: Machine, layout: FrameLayout, map: ProbeMap): Kernel {
  const source = kernelSource(m, layout, map);
  const stateTable = new Int32Array(map.stateWidth <= 16 ? 2 ** map.stateWidth : 0).fill(-1);
  for (const [code, index] of map.stateByCode) if (code < stateTable.length) stateTable[code] = index;
  // Generated from the checked IR only; signals are numbered, so no design text reaches the source.
  const factory = new Function('stateTable', 'stateMap', 'readBig', source) as (
    t: Int32Array,
    s: Map<number, number>,
    r: typeof readBig,
  ) => Omit<Kernel, 'source'>;
  return { ...factory(stateTable, map.stateByCode, readBig), source };
}
