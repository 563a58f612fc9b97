// Bridges core/synth (controller and datapath synthesis) to the service API's text sections and
// cost table. Returns null while core/synth is not part of the build, so the screens can say so.
import type { Machine } from '../../core/ir/schema';
import type { Encoding, SynthCompareView, SynthResultView } from '../../core/services/api';

export interface SynthAdapter {
  run(machine: Machine, encoding: Encoding): SynthResultView;
  compare(machine: Machine): SynthCompareView;
}

export async function loadSynth(): Promise<SynthAdapter | null> {
  return null;
}
