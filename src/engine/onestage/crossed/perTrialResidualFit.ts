// The crossed one-stage model (sites and years) with one residual variance per trial: the
// counterpart of fitCrossed.ts when oneStage.residual is "per-trial". Each trial's plots are
// weighted by its own residual variance; the terms and contrasts are reported as by fitCrossed,
// the residuals as the per-trial engine reports them (variance.residualByTrial, components
// "residual (<trial>)").
//
// Search: the common-residual model is fitted first (fast, profiled); the data are then divided
// by its residual sd so every variance is of order one, and AI-REML runs on all variances at once
// (perTrialResidualSearch.ts). Estimates are reported on the data's own scale.
import type { NetworkInput } from '../../types.js';
import type { ResolvedContrast } from '../../contrasts/resolve.js';
import type { OneStageHooks, VarianceComponentReport, VarianceSummary } from '../types.js';
import { contrastVector, crossedData, CrossedDataError, type CrossedData } from './crossedData.js';
import { crossedLayout } from './crossedLayout.js';
import { optimiseCrossed } from './optimiseCrossed.js';
import { momentStart } from './momentStart.js';
import type { CrossedOptions } from './fitCrossed.js';
import { crossedResult, fixedEffectReports, type CrossedResult } from './crossedResult.js';
import { evaluatePerTrial } from './perTrialResidualModel.js';
import { perTrialSearch } from './perTrialResidualSearch.js';
import { perTrialDerivatives } from './perTrialResidualDerivatives.js';
import { EXACT_HESSIAN_MAX_TRIALS, EXACT_RESIDUAL_SE_MAX_TRIALS, perTrialInference, perTrialLikelihoodRatio } from './perTrialResidualInference.js';

/** Trials with fewer residual df of their own than this are flagged (as by the per-trial engine). */
const THIN_RESIDUAL_DF = 3;

/** Plots minus the trial's own blocks-and-treatments parameters (a connected layout assumed). */
function ownResidualDf(tr: CrossedData['trials'][number]): number {
  const treatments = new Set(tr.treatment).size;
  return tr.y.length - (Math.max(tr.nBlocks, 1) + treatments - 1);
}

export function fitCrossedPerTrialResidual(network: NetworkInput, contrasts: readonly ResolvedContrast[], options: CrossedOptions & { readonly exactHessianMaxTrials?: number }, hooks: OneStageHooks = {}, prepared?: CrossedData): CrossedResult {
  const began = Date.now();
  const d = prepared ?? crossedData(network, options.random, options.yearAsFixed);
  const L = crossedLayout(d, options.random, options.yearAsFixed);
  const warnings: string[] = [];
  const none = d.trials.filter((t) => ownResidualDf(t) < 1).map((t) => t.trial);
  if (none.length > 0)
    throw new CrossedDataError(
      `oneStage.residual "per-trial": ${none.length} trial(s) have no residual degrees of freedom of their own (plots minus blocks and treatments), so their own residual variance cannot be estimated: ${none.slice(0, 10).join(', ')}${none.length > 10 ? ', ...' : ''}; set oneStage.residual to "common" or leave these trials out`,
    );
  const thin = d.trials.filter((t) => ownResidualDf(t) < THIN_RESIDUAL_DF).map((t) => t.trial);
  if (thin.length > 0)
    warnings.push(
      `${thin.length} trial(s) have fewer than ${THIN_RESIDUAL_DF} residual degrees of freedom of their own (${thin.slice(0, 10).join(', ')}${thin.length > 10 ? ', ...' : ''}): a residual variance per trial is barely identifiable there, so the fit can settle on one of several near-equal solutions; a common residual is the safer model for them`,
    );
  const unobserved = network.treatments.map((t) => t.code).filter((c) => !d.treatments.includes(c));
  if (unobserved.length > 0) warnings.push(`treatments with no usable plot are left out of the one-stage model: ${unobserved.join(', ')}`);
  if (d.trialsWithoutSite.length > 0 && (L.at.site >= 0 || L.at['treatment-by-site'] >= 0))
    warnings.push(`${d.trialsWithoutSite.length} trial(s) have no site and count as a site of their own: ${d.trialsWithoutSite.slice(0, 20).join(', ')}`);
  let df = options.df;
  if (df === 'kenward-roger') {
    warnings.push('Kenward–Roger df are not available for the model with site or year terms and a residual per trial: Satterthwaite df are given instead');
    df = 'satterthwaite';
  }
  if (options.profile) warnings.push('profile-likelihood intervals are not yet available with a residual per trial: the variance split shows Wald intervals on the log variance');

  const onEvaluation = (count: number, criterion: number) => hooks.onProgress?.({ stage: 'one-stage (sites and years, residual per trial)', iteration: count, criterion });
  const common = optimiseCrossed(d, L, momentStart(d, L), [], { signal: hooks.signal, onEvaluation }).evaluation;
  const s0 = Math.sqrt(common.sigma2);
  const ds: CrossedData = { ...d, trials: d.trials.map((t) => ({ ...t, y: t.y.map((x) => x / s0) })) };
  const fit = perTrialSearch(ds, L, Float64Array.from(common.theta, (t) => t * t), new Float64Array(d.trials.length).fill(1), [], { signal: hooks.signal, onIteration: onEvaluation });
  if (!fit.converged) warnings.push('one-stage REML (sites and years, residual per trial) did not meet its convergence criterion');
  const scale2 = s0 * s0;
  const ev = evaluatePerTrial(d, L, fit.v.map((x) => x * scale2), fit.r.map((x) => x * scale2));
  if (!ev) throw new Error('the fixed effects are not estimable from these trials');
  // the criterion on the data's own scale differs from the scaled one by (N - p) log s0²
  const shift = (d.nObservations - L.p) * Math.log(scale2);

  const ls = contrasts.map((c) => contrastVector(d.treatments, c, L.p));
  const unit = d.treatments.map((_, j) => Float64Array.from({ length: L.p }, (_, i) => (i === j ? 1 : 0)));
  const estimable = [...ls, ...unit].filter((l): l is Float64Array => l !== null);
  const der = fit.derivatives ?? perTrialDerivatives(ds, L, fit.evaluation);
  const freeTerm = L.terms.map((_, k) => fit.v[k] > 1e-10);
  const exactHessian = options.exactHessianMaxTrials === undefined ? d.trials.length <= EXACT_HESSIAN_MAX_TRIALS : d.trials.length <= options.exactHessianMaxTrials;
  const inf = perTrialInference(ds, L, fit.evaluation, der, freeTerm, estimable, fit.v, fit.r, exactHessian && df === 'satterthwaite');
  if (inf.hessianFallbacks > 0) warnings.push(`the observed Hessian was not positive definite along the Satterthwaite solve for ${inf.hessianFallbacks} contrast(s) or mean(s): their df use the average-information matrix instead`);
  // the evaluation's residual scale is 1 here (every variance absolute), so its SEs are sqrt(l'(X'V^-1X)^-1 l)
  const dfOf = (l: Float64Array): number => (df === 'residual' ? d.nObservations - L.p : (inf.df[estimable.indexOf(l)] ?? NaN));
  const { contrastReports, means } = fixedEffectReports(ev, L, d.treatments, contrasts, ls, unit, { method: df, df: dfOf }, options.confidence);

  const lrtOn = options.lrt ?? true;
  const components: VarianceComponentReport[] = L.terms.map((name, k) => {
    const test = lrtOn ? perTrialLikelihoodRatio(ds, L, fit.evaluation, fit.v, fit.r, k, hooks.signal) : null;
    const se = inf.termSe[k];
    return {
      name,
      estimate: ev.theta[k] ** 2,
      se: se === null ? null : se * scale2,
      atZero: !freeTerm[k],
      lrt: test ? { statistic: test.statistic, p: test.p, reducedLogLik: -(test.reducedCriterion + shift) / 2 } : null,
      profileLower: null,
      profileUpper: null,
    };
  });
  const residualByTrial: Record<string, number> = {};
  d.trials.forEach((tr, i) => {
    const r = fit.r[i] * scale2;
    residualByTrial[tr.trial] = r;
    const se = inf.residualSe[i];
    components.push({ name: `residual (${tr.trial})`, estimate: r, se: se === null ? null : se * scale2, atZero: false, lrt: null, profileLower: null, profileUpper: null });
  });
  const variance: VarianceSummary = { residualByTrial };
  L.terms.forEach((t, k) => (variance[t] = ev.theta[k] ** 2));

  return crossedResult({
    d, L, ev, contrasts, ls, contrastReports, means, components, variance,
    converged: fit.converged,
    iterations: fit.iterations,
    options: { random: [...L.terms], yearAsFixed: options.yearAsFixed, residual: 'per-trial', df, confidence: options.confidence, covariates: [] },
    varianceSeFrom: 'the average-information matrix',
    warnings,
    run: {
      method: `REML with one residual variance per trial (not profiled); start from the common-residual fit, data scaled by its residual sd; AI-REML on all variances at once (Newton steps with the average-information matrix, analytic gradient, terms at zero held by projection, the system solved by conjugate gradients preconditioned with the terms' block, their coupling to each residual and the residuals' diagonal): ${fit.iterations} iterations, ${fit.cgIterations} conjugate-gradient steps, ${fit.evaluations} criterion evaluations; sites as blocks of an arrowhead factor, years and fixed effects in its border. ${inf.hessian ? 'Satterthwaite df from the observed Hessian (products by central differences of the analytic gradient, solved by conjugate gradients preconditioned with the average information)' : 'Satterthwaite df from the average-information matrix in place of the Hessian'}; the variances' SEs from the inverse average information${d.trials.length > EXACT_RESIDUAL_SE_MAX_TRIALS ? "; the residuals' SEs from the preconditioner's approximate inverse" : ''}`,
      start: Object.fromEntries([...L.terms.map((t, k) => [t, common.sigma2 * common.theta[k] ** 2] as const), ['residual', common.sigma2] as const]),
      iterations: fit.iterations,
      emIterations: 0,
      criterionPath: fit.criterionPath.map((c) => c + shift),
      stepHalvings: fit.stepHalvings,
      convergence: "Newton decrement g'AI^-1 g below 1e-10 or 1e-14 of the criterion, whichever is larger (or no further decrease within four halvings once it is below 1e-6)",
      outcome: fit.converged ? 'converged' : 'max-iterations',
      finalDecrement: fit.finalDecrement,
      elapsedMs: Date.now() - began,
    },
  });
}
