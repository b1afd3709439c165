// Treated against control is compared between the two stages, but the two may average different
// treated treatments: the one-stage contrast averages every treated treatment of the network (on
// the population means), while each trial's averages the treated it tested. When some trial that
// carries the contrast lacks a treated treatment, the comparison gets a note saying so.
import type { ContrastSpec } from '../../spec/analysisSpec.js';
import type { NetworkInput, TreatmentInfo } from '../../engine/types.js';

export function treatedSetNote(spec: ContrastSpec, network: NetworkInput, tested: readonly (readonly TreatmentInfo[])[], control: string | undefined): string | null {
  if (!('kind' in spec) || control === undefined) return null;
  const population = network.treatments.map((t) => t.code).filter((c) => c !== control);
  const fewer: { trial: string; lacks: string[] }[] = [];
  tested.forEach((ts, i) => {
    const codes = new Set(ts.map((t) => t.code));
    // Only trials that carry the contrast: the control and at least one treated tested.
    if (!codes.has(control) || codes.size < 2) return;
    const lacks = population.filter((c) => !codes.has(c));
    if (lacks.length > 0) fewer.push({ trial: network.trials[i].trial, lacks });
  });
  if (fewer.length === 0) return null;
  const carrying = tested.filter((ts) => ts.some((t) => t.code === control) && ts.length > 1).length;
  const examples = fewer.slice(0, 3).map((f) => `${f.trial} without ${f.lacks.join(', ')}`).join('; ');
  return `compared, but over different treated sets: the one-stage contrast averages all ${population.length} treated treatments of the network, while ${fewer.length} of the ${carrying} trials that carry it tested fewer and average only those (e.g. ${examples}); a gap between the two may come from that`;
}
