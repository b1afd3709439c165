// Start values: split the pooled within-treatment variance equally among the residual and the
// random terms. Cheap, scale-aware, and the EM warm start moves on from there.
import type { ModelFrame } from './remlCriterion.js';

export function startValues(frame: ModelFrame): Float64Array {
  const { stats, layout } = frame;
  const p = stats.treatments.length;
  const sum = new Float64Array(p);
  const count = new Float64Array(p);
  let ss = 0;
  for (const t of stats.trials) {
    const m = t.m;
    ss += t.gram[t.yColumn * m + t.yColumn];
    for (let a = 0; a < t.treatmentColumns.length; a++) {
      const c = t.treatmentColumns[a];
      sum[t.treatmentIndex[a]] += t.gram[c * m + t.yColumn];
      count[t.treatmentIndex[a]] += t.gram[c * m + c];
    }
  }
  for (let j = 0; j < p; j++) if (count[j] > 0) ss -= (sum[j] * sum[j]) / count[j];
  const total = Math.max(ss / Math.max(stats.nObservations - p, 1), 1e-8);
  const nTerms = layout.termParameter.filter((k) => k >= 0).length;
  const share = total / (nTerms + 1);
  return Float64Array.from(layout.parameters, () => share);
}
