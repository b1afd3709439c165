// The trial stage as the screens run it: one trial, untransformed, 95% intervals, the contrasts a
// screen shows without a spec (treated vs control when there is a control; the linear rate
// trend when a numeric factor has two or more levels). Data problems the model cannot take
// become an explanation instead of an error, so a trial screen still opens.
import { resolveContrast, type ResolvedContrast } from '../../engine/contrasts/resolve.js';
import { analyzeTrial } from '../../engine/trial/analyzeTrial.js';
import type { TrialAnalysis } from '../../engine/trial/types.js';
import type { NetworkInput, TrialInput } from '../../engine/types.js';
import type { ContrastSpec } from '../../spec/analysisSpec.js';

export type StageOutcome = { readonly analysis: TrialAnalysis; readonly error: null } | { readonly analysis: null; readonly error: string };

/** The default contrasts of a network; those its protocol cannot define are left out. */
export function screenContrasts(network: NetworkInput): ResolvedContrast[] {
  const specs: ContrastSpec[] = [];
  if (network.control !== undefined) specs.push({ name: 'treated_vs_control', kind: 'treated-vs-control' });
  const numeric = network.factors.find((f) => f.kind === 'numeric');
  if (numeric !== undefined) specs.push({ name: `${numeric.name}_linear`, trend: numeric.name, degree: 1 });
  const out: ResolvedContrast[] = [];
  for (const spec of specs) {
    try {
      out.push(resolveContrast(spec, network.treatments, network.control, network.factors));
    } catch {
      // e.g. a single rate level: no trend to estimate, so the screen shows none.
    }
  }
  return out;
}

export function runTrialStage(trial: TrialInput, network: NetworkInput, contrasts: readonly ResolvedContrast[]): StageOutcome {
  try {
    const analysis = analyzeTrial(trial, network.treatments, contrasts, { transform: 'none', confidence: 0.95, pairwise: 'none', traitKind: network.traitKind });
    return { analysis, error: null };
  } catch (e) {
    return { analysis: null, error: (e as Error).message };
  }
}
