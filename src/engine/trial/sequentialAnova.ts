// Sequential (type I) ANOVA from the orthogonal effects Q'y: the sum of squares of a term is
// the sum of the squared effects of its non-aliased columns, in model order — so treatments,
// fitted last, are tested adjusted for blocks (or rows and columns). Same construction as
// R's anova.lm.
import { fUpper, tQuantile } from '../stats/distributions.js';
import type { AnovaRow, AnovaTable, LsdRecord } from './types.js';
import type { DesignModel } from './modelMatrix.js';
import type { LinearFit } from './linearFit.js';
import { num } from '../jsonSafe.js';

export function sequentialAnova(model: DesignModel, fit: LinearFit, y: ArrayLike<number>, lsd5: LsdRecord, transformed: boolean): AnovaTable {
  const { rank, pivot } = fit.qr;
  const ss = new Array<number>(model.terms.length).fill(0);
  const df = new Array<number>(model.terms.length).fill(0);
  for (let k = 0; k < rank; k++) {
    const term = model.assign[pivot[k]];
    ss[term] += fit.effects[k] ** 2;
    df[term] += 1;
  }
  const residualDf = fit.residualDf;
  const msE = residualDf > 0 ? fit.rss / residualDf : NaN;
  const rows: AnovaRow[] = [];
  for (let t = 1; t < model.terms.length; t++) {
    if (df[t] === 0) continue;
    const ms = ss[t] / df[t];
    const f = ms / msE;
    rows.push({ term: model.terms[t].name, df: df[t], ss: ss[t], ms: num(ms), f: num(f), p: num(residualDf > 0 ? fUpper(f, df[t], residualDf) : NaN) });
  }
  let mean = 0;
  for (let i = 0; i < y.length; i++) mean += y[i];
  mean /= y.length;
  let total = 0;
  for (let i = 0; i < y.length; i++) total += (y[i] - mean) ** 2;
  return {
    rows,
    residual: { df: residualDf, ss: fit.rss, ms: num(msE) },
    total: { df: y.length - 1, ss: total },
    grandMean: num(mean),
    cv: transformed ? null : num((100 * Math.sqrt(msE)) / mean),
    lsd5,
  };
}

/** LSD at 5 %: t(0.975, error df) times the SE of a difference (average over pairs if they differ). */
export function leastSignificantDifference(pairSes: readonly number[], residualDf: number): LsdRecord {
  const finite = pairSes.filter((s) => Number.isFinite(s));
  if (finite.length === 0 || !(residualDf > 0))
    return { value: null, sed: null, basis: 'common', note: 'not available: fewer than two estimable treatment means or no error degrees of freedom' };
  const sed = finite.reduce((s, v) => s + v, 0) / finite.length;
  const spread = Math.max(...finite) - Math.min(...finite);
  const common = spread <= 1e-9 * sed;
  return {
    value: num(tQuantile(0.975, residualDf) * sed),
    sed: num(sed),
    basis: common ? 'common' : 'average',
    note: common
      ? 'every pair of adjusted means has the same standard error of difference'
      : 'standard errors of difference vary between pairs (missing plots or unequal replication); the LSD uses their average and is approximate for any one pair — use the pairwise SEs',
  };
}
