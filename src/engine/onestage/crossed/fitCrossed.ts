// One-stage REML with sites and years crossed: the treatment means as fixed effects (and the
// years, when fixed), any of site, year, trial (the site-year), block, treatment-by-site,
// treatment-by-year and treatment-by-trial as random terms, a common residual. The result has
// the shape of the per-trial model's result, plus the committee view (siteYearView).
import type { NetworkInput } from '../../types.js';
import type { ResolvedContrast } from '../../contrasts/resolve.js';
import type { OneStageHooks, VarianceComponentReport, VarianceSummary } from '../types.js';
import { contrastVector, crossedData, type CrossedData } from './crossedData.js';
import { crossedLayout } from './crossedLayout.js';
import { optimiseCrossed } from './optimiseCrossed.js';
import { AT_ZERO, likelihoodRatio, profileVariance, type TermTest } from './crossedInference.js';
import { satterthwaiteObserved } from './satterthwaiteObserved.js';
import { crossedResult, fixedEffectReports, type CrossedResult } from './crossedResult.js';
import type { CrossedTerm } from './terms.js';
import { kenwardRogerOrWarn } from './crossedKenwardRoger.js';
import { momentStart } from './momentStart.js';

export interface CrossedOptions {
  readonly random: readonly CrossedTerm[];
  readonly yearAsFixed: boolean;
  readonly df: 'satterthwaite' | 'kenward-roger' | 'residual';
  readonly confidence: number;
  readonly lrt?: boolean;
  readonly profile?: boolean;
  /** Terms given profile intervals when profiling is on (default: all). */
  readonly profileTerms?: readonly CrossedTerm[];
}

export type { CrossedResult } from './crossedResult.js';

/**
 * Profile intervals are asked for (options.profile: true): each needs a re-optimisation per
 * point, slow with the derivative-free search. Otherwise the split shows log-scale Wald intervals.
 */

/** `prepared`: the network's crossedData for these terms when the caller has already built it. */
export function fitCrossed(network: NetworkInput, contrasts: readonly ResolvedContrast[], options: CrossedOptions, hooks: OneStageHooks = {}, prepared?: CrossedData): CrossedResult {
  const began = Date.now();
  const d = prepared ?? crossedData(network, options.random, options.yearAsFixed);
  const L = crossedLayout(d, options.random, options.yearAsFixed);
  const warnings: string[] = [];
  const unobserved = network.treatments.map((t) => t.code).filter((c) => !d.treatments.includes(c));
  if (unobserved.length > 0) warnings.push(`treatments with no usable plot are left out of the one-stage model: ${unobserved.join(', ')}`);
  if (d.trialsWithoutSite.length > 0 && (L.at.site >= 0 || L.at['treatment-by-site'] >= 0))
    warnings.push(`${d.trialsWithoutSite.length} trial(s) have no site and count as a site of their own: ${d.trialsWithoutSite.slice(0, 20).join(', ')}`);
  let df = options.df;
  const onEvaluation = (count: number, criterion: number) => hooks.onProgress?.({ stage: 'one-stage (sites and years)', iteration: count, criterion });
  // moment estimates as the start: about half the AI-REML passes of starting every ratio at 1
  const start = momentStart(d, L);
  const fit = optimiseCrossed(d, L, start, [], { signal: hooks.signal, onEvaluation });
  const ev = fit.evaluation;
  if (!fit.converged) warnings.push('one-stage REML (sites and years) did not meet its convergence criterion within its evaluation budget');
  // a residual per trial (when the options carry one) is not covered by crossedKenwardRoger
  const perTrial = 'residual' in options && options.residual === 'per-trial';
  const kr = df === 'kenward-roger' ? kenwardRogerOrWarn(d, L, ev, perTrial, warnings) : null;
  if (df === 'kenward-roger' && !kr) df = 'satterthwaite';

  const ls = contrasts.map((c) => contrastVector(d.treatments, c, L.p));
  const unit = d.treatments.map((_, j) => Float64Array.from({ length: L.p }, (_, i) => (i === j ? 1 : 0)));
  const estimable = [...ls, ...unit].filter((l): l is Float64Array => l !== null);
  // the Hessian behind the df (the analytic observed information) also gives the variances' SEs:
  // computed whatever the df method
  const sat = satterthwaiteObserved(d, L, ev, estimable, fit.derivatives);
  const sdf = df === 'satterthwaite' ? sat.df : null;
  const dfOf = (l: Float64Array): number => {
    if (df === 'residual') return d.nObservations - L.p;
    return sdf?.[estimable.indexOf(l)] ?? NaN;
  };
  const { contrastReports, means } = fixedEffectReports(ev, L, d.treatments, contrasts, ls, unit, { method: df, df: dfOf, adjusted: kr ? (l) => kr.contrast(l) : undefined }, options.confidence);

  const varianceOf = (k: number) => ev.sigma2 * ev.theta[k] ** 2;
  const lrtOn = options.lrt ?? true;
  const profileOn = options.profile ?? false;
  const tests = new Map<number, TermTest>();
  const components: VarianceComponentReport[] = L.terms.map((name, k) => {
    const test = lrtOn ? likelihoodRatio(d, L, ev, k, { signal: hooks.signal }) : null;
    if (test) tests.set(k, test);
    const prof = profileOn && (options.profileTerms?.includes(name) ?? true) ? profileVariance(d, L, ev, k, options.confidence, test, hooks.signal) : null;
    return {
      name,
      estimate: varianceOf(k),
      se: sat.varianceSe[k],
      atZero: ev.theta[k] <= AT_ZERO,
      lrt: test ? { statistic: test.statistic, p: test.p, reducedLogLik: test.reducedLogLik } : null,
      profileLower: prof ? prof.lower : null,
      profileUpper: prof ? prof.upper : null,
    };
  });
  components.push({ name: 'residual', estimate: ev.sigma2, se: sat.residualSe, atZero: false, lrt: null, profileLower: null, profileUpper: null });
  const variance: VarianceSummary & Partial<Record<CrossedTerm, number>> = { residual: ev.sigma2 };
  L.terms.forEach((t, k) => (variance[t] = varianceOf(k)));

  return crossedResult({
    d, L, ev, contrasts, ls, contrastReports, means, components, variance,
    converged: fit.converged,
    iterations: fit.iterations,
    options: { random: [...L.terms], yearAsFixed: options.yearAsFixed, residual: 'common', df, confidence: options.confidence, covariates: [] },
    varianceSeFrom: 'the observed information',
    warnings,
    run: {
      method:
        fit.search === 'average-information'
          ? `REML, residual variance profiled; AI-REML (Newton steps on the variance ratios with the average-information matrix, analytic gradient, ratios at zero held by projection): ${fit.iterations} iterations, ${fit.evaluations} criterion evaluations; sites as blocks of an arrowhead factor, years and fixed effects in its border`
          : `REML, residual variance profiled; restarted Nelder–Mead simplex on the relative standard deviations, Newton polish on central differences (the AI-REML search made no progress): ${fit.evaluations} criterion evaluations; sites as blocks of an arrowhead factor, years and fixed effects in its border`,
      start: Object.fromEntries(L.terms.map((t, k) => [t, start[k]])),
      iterations: fit.iterations,
      emIterations: 0,
      criterionPath: fit.criterionPath,
      stepHalvings: fit.stepHalvings,
      convergence: fit.search === 'average-information' ? 'Newton decrement g\'AI^-1 g below 1e-11 or 1e-13 of the criterion, whichever is larger (or no further decrease within four halvings once it is below 1e-6)' : 'simplex spread below 1e-13 relative and restarts gaining less than 1e-10',
      outcome: fit.converged ? 'converged' : 'max-iterations',
      finalDecrement: fit.finalDecrement,
      elapsedMs: Date.now() - began,
    },
  });
}
