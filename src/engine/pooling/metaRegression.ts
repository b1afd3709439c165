// Meta-regression on trial covariates: the mixed-effects model y = X b + u + e with
// u ~ N(0, tau²) and e ~ N(0, se²). Coefficients by weighted least squares at the residual
// tau²; Knapp–Hartung t tests (or Wald z) and an omnibus F (or chi-square) test of all
// moderator coefficients; the share of tau² explained relative to the intercept-only model.
import { Matrix, zeros } from '../linalg/matrix.js';
import { cholesky, cholSolve } from '../linalg/cholesky.js';
import { chisqUpper, fUpper } from '../stats/distributions.js';
import { fitModel, FitSettings } from './modelFit.js';
import { estimateTau2 } from './tau2Estimators.js';
import { weightedFit, interceptDesign } from './weightedFit.js';
import { buildModeratorDesign } from './moderatorDesign.js';
import { subgroupAnalysis } from './subgroups.js';
import type { MetaRegression, PoolingItem, RegressionCoefficient } from './types.js';

export function metaRegression(items: readonly PoolingItem[], moderators: readonly string[], settings: FitSettings, threshold: number): MetaRegression {
  const design = buildModeratorDesign(items, moderators);
  const used = design.used.map((i) => items[i]);
  const y = used.map((it) => it.estimate);
  const v = used.map((it) => it.se * it.se);
  const k = used.length;
  const p = design.terms.length;
  const notes: string[] = [];
  if (design.excluded.length) notes.push(`Left out for a missing moderator value: ${design.excluded.join(', ')}.`);
  const subgroups = design.columns
    .filter((c) => c.kind === 'categorical')
    .map((c) => subgroupAnalysis(used, c.moderator, c.levels, settings, threshold));
  const empty: MetaRegression = {
    moderators: [...moderators], k, excluded: design.excluded, statistic: settings.interval === 'hksj' ? 't' : 'z', df: null,
    coefficients: [], aliased: [], residualTau2: null, tau2Explained: null, residualHeterogeneity: null, moderatorTest: null, subgroups, notes,
  };
  if (k <= p) {
    notes.push(`Meta-regression needs more trials (${k}) than coefficients (${p}).`);
    return empty;
  }
  const model = fitModel(y, v, design.x, settings);
  notes.push(...model.notes);
  const aliased = model.tau.fit.aliased.map((j) => design.terms[j]);
  if (aliased.length) notes.push(`Aliased (not estimable, dropped): ${aliased.join(', ')}.`);
  const coefficients: RegressionCoefficient[] = [];
  model.coefficients.forEach((c, j) => {
    if (c) coefficients.push({ term: design.terms[j], estimate: c.estimate, se: c.se, statistic: c.statistic, p: c.p, lower: c.lower, upper: c.upper });
  });
  const tau2 = settings.tau2 === 'fixed' ? 0 : model.tau.tau2;
  const tau2Intercept = estimateTau2(y, v, interceptDesign(k), settings.tau2).tau2;
  const tau2Explained = tau2Intercept > 0 ? Math.max(0, (tau2Intercept - tau2) / tau2Intercept) : null;
  if (tau2Explained === null) notes.push('Share of heterogeneity explained is undefined: tau² of the intercept-only model is zero.');
  const fe = weightedFit(y, v, design.x, 0);
  const residualDf = k - fe.rank;
  const moderatorTest = jointModeratorTest(model.tau.fit.beta, model.tau.fit.covariance, model.scaleUsed, p, model.df);
  return {
    ...empty,
    df: model.df,
    statistic: model.df === null ? 'z' : 't',
    coefficients,
    aliased,
    residualTau2: tau2,
    tau2Explained,
    residualHeterogeneity: { Q: fe.weightedRss, df: residualDf, p: residualDf > 0 ? chisqUpper(fe.weightedRss, residualDf) : null },
    moderatorTest,
  };
}

/** Joint test of all non-intercept, non-aliased coefficients. */
function jointModeratorTest(beta: Float64Array, covariance: Matrix, scale: number, p: number, df: number | null): MetaRegression['moderatorTest'] {
  const idx: number[] = [];
  for (let j = 1; j < p; j++) if (!Number.isNaN(beta[j])) idx.push(j);
  const m = idx.length;
  if (m === 0) return null;
  const sub = zeros(m, m);
  for (let a = 0; a < m; a++) for (let b = 0; b < m; b++) sub.data[a * m + b] = scale * covariance.data[idx[a] * p + idx[b]];
  const bsub = idx.map((j) => beta[j]);
  const solved = cholSolve(cholesky(sub), bsub);
  let stat = 0;
  for (let a = 0; a < m; a++) stat += bsub[a] * solved[a];
  if (df === null) return { statistic: stat, distribution: 'chi-square', df: m, dfDenominator: null, p: chisqUpper(stat, m) };
  return { statistic: stat / m, distribution: 'F', df: m, dfDenominator: df, p: fUpper(stat / m, m, df) };
}
