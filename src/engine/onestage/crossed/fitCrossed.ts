// One-stage REML with sites and years crossed: the treatment means as fixed effects (and the
// years, when fixed), any of site, year, trial (the site-year), block, treatment-by-site,
// treatment-by-year and treatment-by-trial as random terms, a common residual. The result has
// the shape of the per-trial model's result, plus the committee view (siteYearView).
import type { NetworkInput } from '../../types.js';
import type { ResolvedContrast } from '../../contrasts/resolve.js';
import { tInterval } from '../contrastInference.js';
import { normalQuantile } from '../../stats/distributions.js';
import type { ContrastReport, OneStageHooks, OneStageResult, VarianceComponentReport, VarianceSummary } from '../types.js';
import { contrastVector, crossedData, type CrossedData } from './crossedData.js';
import { crossedLayout, type CrossedLayout } from './crossedLayout.js';
import type { CrossedEvaluation } from './crossedLikelihood.js';
import { optimiseCrossed } from './optimiseCrossed.js';
import { AT_ZERO, likelihoodRatio, profileVariance, type TermTest } from './crossedInference.js';
import { satterthwaiteObserved } from './satterthwaiteObserved.js';
import { contrastAtSite, contrastAtSiteErrorVariance, solveShared, trialBlups } from './crossedPredictions.js';
import { KNOWN_SITE_CAUTION, tCritical, type SiteYearContrast, type SiteYearSplit, type SiteYearView } from './siteYearView.js';
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

export type CrossedResult = OneStageResult & { siteYearView: SiteYearView };

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
    const i = estimable.indexOf(l);
    return sdf?.[i] ?? NaN;
  };
  const report = (name: string, l: Float64Array | null): ContrastReport => {
    if (!l) return { name, estimate: null, se: null, df: null, lower: null, upper: null, p: null, dfMethod: df, seUnadjusted: null, note: 'not estimable: a treatment in the contrast has no usable plot' };
    let estimate = 0;
    let q = 0;
    for (let i = 0; i < L.p; i++) {
      estimate += l[i] * ev.beta[i];
      for (let j = 0; j < L.p; j++) q += l[i] * ev.xhxInverse[i * L.p + j] * l[j];
    }
    const seUnadjusted = Math.sqrt(ev.sigma2 * q);
    const adjusted = kr?.contrast(l);
    const se = adjusted ? Math.sqrt(adjusted.variance) : seUnadjusted;
    const dfl = adjusted ? adjusted.df : dfOf(l);
    const ci = tInterval(estimate, se, dfl, options.confidence);
    return { name, estimate, se, df: Number.isFinite(dfl) ? dfl : null, lower: ci.lower, upper: ci.upper, p: ci.p, dfMethod: df, seUnadjusted };
  };
  const contrastReports = contrasts.map((c, i) => report(c.name, ls[i]));
  const means = d.treatments.map((treatment, j) => {
    const r = report(treatment, unit[j]);
    return { treatment, estimate: r.estimate!, se: r.se!, df: r.df, lower: r.lower, upper: r.upper };
  });

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

  const sol = solveShared(L, ev);
  const blups = trialBlups(d, L, ev, sol, ls);
  const trials = d.trials.map((tr, i) => ({
    trial: tr.trial,
    contrasts: contrasts.map((c, ci) => ({ name: c.name, blup: blups[i][ci], raw: null, rawSe: null, rawDf: null })),
  }));
  const siteYearView = committeeView(d.sites, d.trials, d.years, L, ev, sol, contrasts, ls, contrastReports, components, options.confidence);
  return {
    minusTwoLogLik: ev.criterion,
    logLik: -ev.criterion / 2,
    converged: fit.converged,
    iterations: fit.iterations,
    variance,
    means,
    contrasts: contrastReports,
    covariates: [],
    varianceComponents: components,
    trials,
    nObservations: d.nObservations,
    nTrials: d.trials.length,
    droppedPlots: d.droppedPlots,
    options: { random: [...L.terms], yearAsFixed: options.yearAsFixed, residual: 'common', df, confidence: options.confidence, covariates: [] },
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
    siteYearView,
  };
}

export function committeeView(
  sites: readonly string[],
  trials: readonly { site: number; year: number }[],
  years: readonly number[],
  L: CrossedLayout,
  ev: CrossedEvaluation,
  sol: ReturnType<typeof solveShared>,
  contrasts: readonly ResolvedContrast[],
  ls: readonly (Float64Array | null)[],
  reports: readonly ContrastReport[],
  components: readonly VarianceComponentReport[],
  confidence: number,
): SiteYearView {
  const v = (term: CrossedTerm) => (L.at[term] >= 0 ? ev.sigma2 * ev.theta[L.at[term]] ** 2 : null);
  const parts: [SiteYearSplit['part'], SiteYearSplit['term']][] = [
    ['site', 'treatment-by-site'],
    ['year', 'treatment-by-year'],
    ['site-year', 'treatment-by-trial'],
  ];
  const total = parts.reduce((s, [, t]) => s + (v(t) ?? 0), 0);
  const split = parts.map(([part, term]): SiteYearSplit => {
    const c = components.find((x) => x.name === term);
    const base = { part, term, variance: v(term), share: v(term) === null || !(total > 0) ? null : v(term)! / total };
    if (c && c.profileUpper !== null) return { ...base, lower: c.profileLower, upper: c.profileUpper, intervalMethod: 'profile-likelihood' };
    if (c && c.se !== null && c.estimate > 0) {
      // Wald on the log variance: estimate x exp(± z se/estimate), never below zero
      const z = normalQuantile(1 - (1 - confidence) / 2);
      const spread = Math.exp((z * c.se) / c.estimate);
      return { ...base, lower: c.estimate / spread, upper: c.estimate * spread, intervalMethod: 'wald-log' };
    }
    return { ...base, lower: null, upper: null, intervalMethod: 'none' };
  });
  const siteShare = v('treatment-by-site');
  const yearsAt = sites.map(() => new Set<number>());
  for (const t of trials) yearsAt[t.site].add(years[t.year]);
  const view: SiteYearContrast[] = contrasts.map((c, i) => {
    const l = ls[i];
    const r = reports[i];
    let sumSq = 0;
    if (l) for (const x of l) sumSq += x * x;
    const siteVariance = sumSq * (v('treatment-by-site') ?? 0);
    const yearVariance = sumSq * (v('treatment-by-year') ?? 0);
    const siteYearVariance = sumSq * (v('treatment-by-trial') ?? 0);
    let newSiteNewYear: SiteYearContrast['newSiteNewYear'] = null;
    const dfNew = Math.max(1, sites.length - 2);
    const crit = tCritical(confidence, dfNew);
    if (l && r.estimate !== null && r.se !== null) {
      const sd = Math.sqrt(r.se ** 2 + siteVariance + yearVariance + siteYearVariance);
      newSiteNewYear = { lower: r.estimate - crit * sd, upper: r.estimate + crit * sd, df: dfNew, sd };
    }
    const nextYearAtSite =
      l && L.at['treatment-by-site'] >= 0
        ? sites.map((site, s) => {
            const estimate = contrastAtSite(L, ev, sol, s, l);
            const predictionSe = Math.sqrt(contrastAtSiteErrorVariance(L, ev, s, l) + yearVariance + siteYearVariance);
            // the same t as the new site's: a known site's interval must not come out wider than a
            // new site's only because years are fewer than sites (t(years - 2) did, with 3 years)
            return { site, pastYears: [...yearsAt[s]].sort((a, b) => a - b), estimate, predictionSe, lower: estimate - crit * predictionSe, upper: estimate + crit * predictionSe };
          })
        : [];
    return { name: c.name, estimate: r.estimate, siteVariance, yearVariance, siteYearVariance, newSiteNewYear, nextYearAtSite };
  });
  return {
    split,
    siteRepeatability: siteShare === null || !(total > 0) ? null : siteShare / total,
    sites: sites.length,
    years: years.length,
    contrasts: view,
    method:
      'new site in a new year: estimate ± t(sites - 2) sqrt(se² + sum l² (treatment-by-site + treatment-by-year + treatment-by-trial variances)); next year at a known site: the site\'s BLUP ± t(sites - 2) sqrt(its prediction-error variance + sum l² (treatment-by-year + treatment-by-trial variances)); intervals on the variances by profile likelihood when asked for (oneStage.profile: true), otherwise Wald intervals on the log variance from the observed information',
    caution: KNOWN_SITE_CAUTION,
  };
}
