// Plots left out by an explicit, recorded user choice (spec.exclude). Nothing is ever dropped
// because a diagnostic flagged it; only this list removes plots, and each carries its reason.
import type { NetworkInput } from '../../engine/types.js';
import type { AnalysisSpec } from '../../spec/analysisSpec.js';
import { ManyfieldError } from '../result.js';

export function applyExclusions(network: NetworkInput, exclude: AnalysisSpec['exclude'], warnings: string[]): NetworkInput {
  if (exclude.length === 0) return network;
  const pending = new Map(exclude.map((e) => [`${e.trial}\u0000${String(e.plot)}`, e]));
  const trials = network.trials.map((t) => ({
    ...t,
    plots: t.plots.map((p) => {
      const key = `${t.trial}\u0000${String(p.plotId)}`;
      const e = pending.get(key);
      if (!e) return p;
      pending.delete(key);
      warnings.push(`trial ${t.trial}, plot ${String(p.plotId)} excluded by the user: ${e.reason}`);
      return { ...p, excluded: { reason: e.reason } };
    }),
  }));
  if (pending.size > 0) {
    const missing = [...pending.values()].map((e) => `trial ${e.trial} plot ${String(e.plot)}`).join(', ');
    throw new ManyfieldError('invalid-argument', `spec.exclude names plots that do not exist: ${missing}`);
  }
  return { ...network, trials };
}
