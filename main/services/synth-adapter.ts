// Bridges core/synth (controller and datapath synthesis) to the service API: the text report of
// core/synth/format.ts cut into titled sections, and the encoding comparison as a cost table.
import type { Machine } from '../../core/ir/schema';
import type { Encoding, SynthCompareView, SynthResultView } from '../../core/services/api';
import { compareEncodings, synthesize } from '../../core/synth/index';
import { formatSynthesis } from '../../core/synth/format';

export interface SynthAdapter {
  run(machine: Machine, encoding: Encoding): SynthResultView;
  compare(machine: Machine): SynthCompareView;
}

const SECTION_IDS: [RegExp, string][] = [
  [/^Datapath/, 'datapath'],
  [/^Controller/, 'controller'],
  [/^State encoding/, 'encoding'],
  [/^Equations/, 'equations'],
  [/^Full-decode/, 'full-decode'],
  [/^Cost/, 'cost'],
];

/** Splits the report at blank lines; each block's first line is its title. The report's own title line is dropped. */
export function reportSections(report: string): SynthResultView['sections'] {
  const blocks = report.replace(/\n+$/, '').split(/\n\s*\n/);
  return blocks.slice(1).map((block, k) => {
    const [title, ...rest] = block.split('\n');
    const id = SECTION_IDS.find(([re]) => re.test(title))?.[1] ?? `part-${k + 1}`;
    const body = rest.length ? rest.map((l) => l.replace(/^ {2}/, '')).join('\n') : '';
    return { id, title: title.replace(/:$/, ''), text: body };
  });
}

function fail(encoding: Encoding, message: string): SynthResultView {
  return { encoding, diagnostics: [{ severity: 'error', line: 1, col: 1, message, hint: 'choose another encoding, or check the design' }], sections: [] };
}

export const coreSynth: SynthAdapter = {
  run(machine, encoding) {
    const r = synthesize(machine, { encoding });
    if (!r.ok) return fail(encoding, r.error);
    return { encoding, diagnostics: [], sections: reportSections(formatSynthesis(r.result)) };
  },
  compare(machine) {
    const c = compareEncodings(machine);
    return {
      diagnostics: [],
      metricNames: [
        { key: 'flipFlops', label: 'flip-flops' },
        { key: 'products', label: 'product terms' },
        { key: 'literals', label: 'literals' },
        { key: 'gates2', label: 'two-input gates' },
      ],
      columns: c.rows.map((r) => ({
        label: r.encoding,
        encoding: (r.encoding === 'onehot full decode' ? 'onehot' : r.encoding) as Encoding,
        available: r.ok,
        note: r.error ?? (r.encoding === 'onehot full decode' ? 'one-hot codes with fully decoded equations (for comparison; the HDL uses the one-hot form)' : ''),
        metrics: (r.ok ? { flipFlops: r.flipFlops, products: r.products, literals: r.literals, gates2: r.gates2 } : {}) as Record<string, number>,
      })),
    };
  },
};

export async function loadSynth(): Promise<SynthAdapter | null> {
  return coreSynth;
}
