// The first `count` bootstrap data sets of a pivot model, drawn with a fixed seed, studentised as
// the prediction does, and written as CSV rows (new site's effect, then every estimate) for a base-R
// refit of the very same data sets.
import type { PivotModel } from '../../../../../src/engine/pooling/multilevel/bootstrapPivotPrediction.js';
import { mulberry32, normalSampler } from '../../../../../src/engine/stats/random.js';

export interface SharedPivots {
  readonly pivots: number[];
  readonly rows: string[];
}

export function sharedPivotDraws(model: PivotModel, sizes: readonly number[], count: number, seed = 3): SharedPivots {
  const normal = normalSampler(mulberry32(seed));
  const y = sizes.map((n) => new Float64Array(n));
  const pivots: number[] = [];
  const rows: string[] = [];
  for (let b = 0; b < count; b++) {
    const newEffect = model.simulate(normal, y);
    const f = model.refit(y);
    if (!f) throw new Error('refit failed');
    pivots.push((newEffect - f.mu) / Math.sqrt(f.muVariance + f.between));
    rows.push([newEffect, ...y.flatMap((a) => [...a])].map((x) => x.toPrecision(17)).join(','));
  }
  return { pivots, rows };
}
