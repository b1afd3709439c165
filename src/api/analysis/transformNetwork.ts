// The one-stage model sees the response on the analysis scale chosen in the spec, with the
// same transform rules as the trial stage; a log offset needed for zeros is decided once over
// the whole network and shared by both stages.
import type { NetworkInput } from '../../engine/types.js';
import { makeTransform } from '../../engine/trial/transform.js';
import type { AnalysisSpec } from '../../spec/analysisSpec.js';

function analysedValues(network: NetworkInput): number[] {
  return network.trials.flatMap((t) => t.plots.filter((p) => p.value !== null && !p.excluded).map((p) => p.value as number));
}

/** The log offset every stage uses: the spec's, else the rule of the trial stage applied to all trials. */
export function networkLogOffset(network: NetworkInput, spec: AnalysisSpec): number | undefined {
  if (spec.transform !== 'log' || spec.logOffset !== undefined) return spec.logOffset;
  // 0 means no zeros anywhere: leave each trial to say so itself.
  return makeTransform('log', analysedValues(network), 'all trials').record.logOffset || undefined;
}

export function transformNetwork(network: NetworkInput, kind: AnalysisSpec['transform'], logOffset: number | undefined): NetworkInput {
  if (kind === 'none') return network;
  const transform = makeTransform(kind, analysedValues(network), 'all trials', logOffset);
  return {
    ...network,
    trials: network.trials.map((t) => ({ ...t, plots: t.plots.map((p) => (p.value === null ? p : { ...p, value: transform.forward(p.value) })) })),
  };
}
