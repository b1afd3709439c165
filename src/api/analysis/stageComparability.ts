// Whether the one-stage contrast (on the population treatment means) and the pool of per-trial
// contrasts (each on what its trial tested) estimate the same quantity. A trend is the case
// where they may not: a slope over rates that no single trial spans is an extrapolation of
// every trial's own slope, and a degree-2 or higher component is scaled on each trial's own
// spacing. Such a contrast is reported side by side but not compared; the reason says why.
import type { ContrastSpec } from '../../spec/analysisSpec.js';
import type { NetworkInput, TreatmentInfo } from '../../engine/types.js';

export function notComparable(spec: ContrastSpec, network: NetworkInput, tested: readonly (readonly TreatmentInfo[])[]): string | null {
  if (!('trend' in spec)) return null;
  if (network.trials.some((t) => Object.values(t.appliedLevels ?? {}).some((l) => spec.trend in l)))
    return `not compared: treatments were applied at different ${spec.trend} amounts in different trials, so a treatment's population mean has no single ${spec.trend}; each trial's trend uses the amounts applied there`;
  const ratesOf = (ts: readonly TreatmentInfo[]): number[] => [...new Set(ts.map((t) => t.levels[spec.trend]).filter((v): v is number => typeof v === 'number'))].sort((a, b) => a - b);
  const all = ratesOf(network.treatments);
  if (all.length === 0) return null;
  const own = tested.map(ratesOf).filter((r) => r.length > spec.degree);
  if (spec.degree === 1) {
    const lo = all[0];
    const hi = all[all.length - 1];
    if (own.some((r) => r[0] <= lo && r[r.length - 1] >= hi)) return null;
    return `not compared: the one-stage slope runs over ${spec.trend} ${lo} to ${hi}, a range no single trial spans, while each trial's slope is over its own range`;
  }
  const key = all.join(',');
  if (own.every((r) => r.join(',') === key)) return null;
  return `not compared: a degree-${spec.degree} component is scaled on the rates it is fitted on, and the trials tested different ${spec.trend} sets from the network's (${all.join(', ')})`;
}
