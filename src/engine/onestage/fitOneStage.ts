// One-stage REML fit of every plot of every trial: fixed treatment means, random terms nested in
// trial (trial, block within trial, treatment x trial), and a common or per-trial residual.
// Pipeline: sufficient statistics -> parameter layout -> AI-REML optimisation -> inference.
import { contrastVector } from './contrastVector.js';
import type { NetworkInput } from '../types.js';
import type { ResolvedContrast } from '../contrasts/resolve.js';
import { chisqUpper } from '../stats/distributions.js';
import { buildNetworkStatistics } from './sufficientStatistics.js';
import { parameterLayout } from './parameters.js';
import { completeEvaluation, modelFrame, type ModelFrame } from './remlCriterion.js';
import { optimiseReml, type OptimiseOutcome } from './optimise.js';
import { startValues } from './startValues.js';
import { activeParameterTable } from './trialParameters.js';
import { secondOrder, kenwardRogerU, type SecondOrder } from './secondOrder.js';
import { oneStageNewSite } from './newSitePrediction.js';
import { kenwardRogerContrast, satterthwaiteDf, tInterval, quadraticForm } from './contrastInference.js';
import { kenwardRogerWeights, type KenwardRogerWeights } from './kenwardRogerWeights.js';
import { averageInformationInverse, observedInformationInverse } from './informationSolver.js';
import { trialContrasts, type ContrastVector } from './trialContrasts.js';
import { profileInterval } from './profile.js';
import { RANDOM_TERMS } from './types.js';
import type { ContrastReport, OneStageHooks, OneStageOptions, OneStageResult, VarianceComponentReport, VarianceSummary } from './types.js';

export type { OneStageOptions, OneStageResult, OneStageHooks } from './types.js';
export { OneStageCancelledError } from './types.js';
export { OneStageDataError } from './sufficientStatistics.js';

/** With a residual per trial, trials with fewer residual df of their own than this are flagged. */
const THIN_RESIDUAL_DF = 3;

/** Trials whose own fit (blocks + treatments) leaves fewer than THIN_RESIDUAL_DF residual df. */
function thinResidualTrials(trials: readonly { trial: string; n: number; blockColumns: Int32Array; treatmentCount: number }[]): string[] {
  // blocks + treatments - 1 parameters for a connected layout (one treatment absorbed by the block intercepts)
  return trials.filter((t) => t.n - (Math.max(t.blockColumns.length, 1) + t.treatmentCount - 1) < THIN_RESIDUAL_DF).map((t) => t.trial);
}

/** Networks up to this many trials get profile-likelihood intervals unless options.profile says otherwise. */
const PROFILE_DEFAULT_MAX_TRIALS = 200;

export function fitOneStage(network: NetworkInput, contrasts: readonly ResolvedContrast[], options: OneStageOptions, hooks: OneStageHooks = {}): OneStageResult {
  const began = Date.now();
  const random = RANDOM_TERMS.filter((t) => options.random.includes(t));
  const covariateNames = [...(options.covariates ?? [])];
  const stats = buildNetworkStatistics(network, random, covariateNames);
  const layout = parameterLayout(stats, options.residual);
  const frame = modelFrame(stats, layout);
  const warnings: string[] = [];
  const unobserved = network.treatments.map((t) => t.code).filter((c) => !stats.treatments.includes(c));
  if (unobserved.length > 0) warnings.push(`treatments with no usable plot are left out of the one-stage model: ${unobserved.join(', ')}`);
  if (options.residual === 'per-trial') {
    const thin = thinResidualTrials(stats.trials);
    if (thin.length > 0)
      warnings.push(
        `${thin.length} trial(s) have fewer than ${THIN_RESIDUAL_DF} residual degrees of freedom of their own (${thin.slice(0, 10).join(', ')}${thin.length > 10 ? ', ...' : ''}): a residual variance per trial is barely identifiable there, so the fit can settle on one of several near-equal solutions; a common residual is the safer model for them`,
      );
  }
  if (stats.trialsWithoutCovariates.length > 0)
    warnings.push(`trials without a value for every covariate (${covariateNames.join(', ')}) are left out of the one-stage model: ${stats.trialsWithoutCovariates.join(', ')}`);

  const fit = optimiseReml(frame, startValues(frame), hooks, { stage: 'one-stage' });
  const ev = fit.evaluation;
  const nP = layout.parameters.length;
  const p = stats.fixed.length;
  const free = Array.from({ length: nP }, (_, k) => k).filter((k) => !fit.atZero[k]);
  if (fit.run.outcome !== 'converged') warnings.push(`one-stage REML did not meet its convergence criterion (${fit.run.outcome} after ${fit.run.iterations} iterations)`);

  const active = activeParameterTable(frame);
  const needSecond = options.df !== 'residual';
  const so: SecondOrder | null = needSecond ? secondOrder(frame, ev, fit.score, active) : null;

  const aiInverse = averageInformationInverse(fit.score, ev.c, p, layout, free);
  const aiInvDiag = aiInverse ? aiInverse.inverseDiagonal() : null;
  // position of each parameter among the free ones (-1 at zero); indexOf per parameter would be quadratic
  const freePosition = new Int32Array(nP).fill(-1);
  free.forEach((k, f) => (freePosition[k] = f));
  const seOf = (k: number): number | null => {
    const f = freePosition[k];
    return f < 0 || !aiInvDiag ? null : Math.sqrt(2 * aiInvDiag[f]);
  };

  const vectors: ContrastVector[] = contrasts.map((c) => ({ name: c.name, l: contrastVector(stats.treatments, c, p) }));
  // a covariate's slope is the contrast that picks its coefficient
  const slopes: ContrastVector[] = stats.covariates.map((cv, a) => ({ name: cv.name, l: Float64Array.from({ length: p }, (_, j) => (j === stats.treatments.length + a ? 1 : 0)) }));
  // each treatment mean is the contrast that picks its cell mean: its df and interval come the same way
  const meanVectors: ContrastVector[] = stats.treatments.map((t, j) => ({ name: t, l: Float64Array.from({ length: p }, (_, i) => (i === j ? 1 : 0)) }));
  // one call: the Kenward–Roger pieces are worked out once for all of them
  const reports = contrastInference(frame, fit, so, free, [...vectors, ...slopes, ...meanVectors], options, active);
  const contrastReports = reports.slice(0, vectors.length);
  const slopeReports = reports.slice(vectors.length, vectors.length + slopes.length);
  const meanReports = reports.slice(vectors.length + slopes.length);

  const lrtOn = options.lrt ?? true;
  const profileOn = options.profile ?? stats.trials.length <= PROFILE_DEFAULT_MAX_TRIALS;
  const components: VarianceComponentReport[] = layout.parameters.map((par, k) => {
    const isTerm = par.kind === 'term';
    const lrt = isTerm && lrtOn ? likelihoodRatio(frame, fit, k, hooks) : null;
    const prof = isTerm && profileOn ? profileInterval(frame, fit, k, options.confidence, hooks) : null;
    return {
      name: par.name,
      estimate: ev.theta[k],
      se: seOf(k),
      atZero: fit.atZero[k],
      lrt,
      profileLower: prof ? prof.lower : null,
      profileUpper: prof ? prof.upper : null,
    };
  });

  const variance: VarianceSummary = {};
  layout.parameters.forEach((par, k) => {
    if (par.kind === 'term') variance[par.name as 'trial' | 'block' | 'treatment-by-trial'] = ev.theta[k];
    else if (par.trial < 0) variance.residual = ev.theta[k];
    else (variance.residualByTrial ??= {})[stats.trials[par.trial].trial] = ev.theta[k];
  });

  const ttParam = layout.termParameter[2];
  const trials = trialContrasts(frame, ev, vectors, ttParam >= 0 ? ev.theta[ttParam] : 0);
  const newSite = options.newSite
    ? vectors.map((v, c) =>
        oneStageNewSite(contrastReports[c], v.l, ttParam >= 0 ? ev.theta[ttParam] : null, trials.map((t) => t.contrasts[c]), stats.trials.length, {
          ...options.newSite!,
          confidence: options.confidence,
          signal: hooks.signal,
        }),
      )
    : undefined;
  const means = stats.treatments.map((treatment, j) => ({ treatment, estimate: ev.beta[j], se: Math.sqrt(ev.c[j * p + j]), df: meanReports[j].df, lower: meanReports[j].lower, upper: meanReports[j].upper }));
  const run = { ...fit.run, elapsedMs: Date.now() - began };
  return {
    minusTwoLogLik: ev.criterion,
    logLik: -ev.criterion / 2,
    converged: fit.run.outcome === 'converged',
    iterations: fit.run.iterations,
    variance,
    means,
    contrasts: contrastReports,
    covariates: slopeReports.map(({ note: _note, ...r }, a) => ({ ...r, centre: stats.covariates[a].centre })),
    varianceComponents: components,
    trials,
    ...(newSite ? { newSite } : {}),
    nObservations: stats.nObservations,
    nTrials: stats.trials.length,
    droppedPlots: stats.droppedPlots,
    options: { random: [...random], residual: options.residual, df: options.df, confidence: options.confidence, covariates: covariateNames },
    warnings,
    run,
  };
}

function contrastInference(frame: ModelFrame, fit: OptimiseOutcome, so: SecondOrder | null, free: readonly number[], vectors: readonly ContrastVector[], options: OneStageOptions, active: ReturnType<typeof activeParameterTable>): ContrastReport[] {
  const ev = fit.evaluation;
  const p = frame.stats.fixed.length;
  let kr: { pieces: KenwardRogerWeights; u: Float64Array } | null = null;
  if (options.df === 'kenward-roger' && so) {
    const pieces = kenwardRogerWeights(so, fit.atZero, frame.sharedParameters);
    // Kenward–Roger's Q_kl are read from every pattern's block
    kr = { pieces, u: kenwardRogerU(frame, completeEvaluation(frame, ev), so, pieces, active) };
  }
  const observed = options.df === 'satterthwaite' && so ? observedInformationInverse(fit.score, so, ev.c, p, frame.layout, free) : null;
  return vectors.map((v): ContrastReport => {
    const empty = { name: v.name, estimate: null, se: null, df: null, lower: null, upper: null, p: null, dfMethod: options.df, seUnadjusted: null };
    if (!v.l) return { ...empty, note: 'not estimable: a treatment in the contrast has no usable plot' };
    let estimate = 0;
    for (let j = 0; j < p; j++) estimate += v.l[j] * ev.beta[j];
    const seUnadjusted = Math.sqrt(quadraticForm(ev.c, p, v.l));
    let se = seUnadjusted;
    let df: number;
    if (options.df === 'residual') df = frame.stats.nObservations - p;
    else if (options.df === 'satterthwaite') df = satterthwaiteDf(ev, so!, free, observed, v.l);
    else {
      const r = kenwardRogerContrast(ev, so!, kr!.pieces, kr!.u, v.l);
      df = r.df;
      se = Math.sqrt(r.variance);
    }
    const ci = tInterval(estimate, se, df, options.confidence);
    return { name: v.name, estimate, se, df, lower: ci.lower, upper: ci.upper, p: ci.p, dfMethod: options.df, seUnadjusted };
  });
}

/** Refit without component k; the statistic's null law is the 50:50 mixture of chi2_0 and chi2_1. */
function likelihoodRatio(frame: ModelFrame, fit: OptimiseOutcome, k: number, hooks: OneStageHooks): { statistic: number; p: number; reducedLogLik: number } {
  const full = fit.evaluation.criterion;
  if (fit.atZero[k]) return { statistic: 0, p: 1, reducedLogLik: -full / 2 };
  const start = Float64Array.from(fit.evaluation.theta);
  start[k] = 0;
  const reduced = optimiseReml(frame, start, hooks, { fixedZero: [k], emIterations: 0, stage: `likelihood-ratio test of ${frame.layout.parameters[k].name}` });
  const statistic = Math.max(0, reduced.evaluation.criterion - full);
  return { statistic, p: statistic > 0 ? 0.5 * chisqUpper(statistic, 1) : 1, reducedLogLik: -reduced.evaluation.criterion / 2 };
}
