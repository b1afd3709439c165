// The one-stage model sees the response on the analysis scale chosen in the spec; the same
// transform rules as the trial stage apply, with offsets decided over the whole network.
import type { NetworkInput } from '../../engine/types.js';
import { makeTransform } from '../../engine/trial/transform.js';
import type { AnalysisSpec } from '../../spec/analysisSpec.js';

export function transformNetwork(network: NetworkInput, spec: AnalysisSpec): NetworkInput {
  if (spec.transform === 'none') return network;
  const values = network.trials.flatMap((t) => t.plots.filter((p) => p.value !== null && !p.excluded).map((p) => p.value as number));
  const transform = makeTransform(spec.transform, values, 'all trials', spec.logOffset);
  return {
    ...network,
    trials: network.trials.map((t) => ({ ...t, plots: t.plots.map((p) => (p.value === null ? p : { ...p, value: transform.forward(p.value) })) })),
  };
}
