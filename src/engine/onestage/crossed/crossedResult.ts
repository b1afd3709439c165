// What a crossed fit reports, whichever residual it has (common or per trial): each trial's BLUP
// of each contrast, and the committee view — the treatment-by-environment variance split into
// site, year and site-year parts, the site's share, a new site in a new year and next year at each
// known site.
import type { ResolvedContrast } from '../../contrasts/resolve.js';
import { normalQuantile } from '../../stats/distributions.js';
import type { ContrastReport, OneStageResult, VarianceComponentReport } from '../types.js';
import { tInterval } from '../contrastInference.js';
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import type { CrossedEvaluation } from './crossedLikelihood.js';
import { contrastAtSite, contrastAtSiteErrorVariance, solveShared, trialBlups } from './crossedPredictions.js';
import { KNOWN_SITE_CAUTION, tCritical, type SiteYearContrast, type SiteYearSplit, type SiteYearView } from './siteYearView.js';
import type { CrossedTerm } from './terms.js';

export type CrossedResult = OneStageResult & { siteYearView: SiteYearView };

export interface CrossedResultParts {
  readonly d: CrossedData;
  readonly L: CrossedLayout;
  readonly ev: CrossedEvaluation;
  readonly contrasts: readonly ResolvedContrast[];
  readonly ls: readonly (Float64Array | null)[];
  readonly contrastReports: ContrastReport[];
  readonly means: OneStageResult['means'];
  readonly components: VarianceComponentReport[];
  readonly variance: OneStageResult['variance'];
  readonly converged: boolean;
  readonly iterations: number;
  readonly options: OneStageResult['options'];
  /** Where the variances' SEs (and so their Wald intervals) come from, in words. */
  readonly varianceSeFrom: string;
  readonly warnings: string[];
  readonly run: OneStageResult['run'];
}

/** How a contrast's df (and, for Kenward–Roger, its adjusted variance) are found. */
export interface ContrastDf {
  readonly method: 'satterthwaite' | 'kenward-roger' | 'residual';
  readonly df: (l: Float64Array) => number;
  readonly adjusted?: (l: Float64Array) => { variance: number; df: number } | undefined;
}

/** Each contrast's and each treatment mean's estimate, SE, df and interval from the fit's fixed effects. */
export function fixedEffectReports(
  ev: CrossedEvaluation,
  L: CrossedLayout,
  treatments: readonly string[],
  contrasts: readonly ResolvedContrast[],
  ls: readonly (Float64Array | null)[],
  unit: readonly Float64Array[],
  dfs: ContrastDf,
  confidence: number,
): { contrastReports: ContrastReport[]; means: OneStageResult['means'] } {
  const report = (name: string, l: Float64Array | null): ContrastReport => {
    if (!l) return { name, estimate: null, se: null, df: null, lower: null, upper: null, p: null, dfMethod: dfs.method, seUnadjusted: null, note: 'not estimable: a treatment in the contrast has no usable plot' };
    let estimate = 0;
    let q = 0;
    for (let i = 0; i < L.p; i++) {
      estimate += l[i] * ev.beta[i];
      for (let j = 0; j < L.p; j++) q += l[i] * ev.xhxInverse[i * L.p + j] * l[j];
    }
    const seUnadjusted = Math.sqrt(ev.sigma2 * q);
    const adjusted = dfs.adjusted?.(l);
    const se = adjusted ? Math.sqrt(adjusted.variance) : seUnadjusted;
    const dfl = adjusted ? adjusted.df : dfs.df(l);
    const ci = tInterval(estimate, se, dfl, confidence);
    return { name, estimate, se, df: Number.isFinite(dfl) ? dfl : null, lower: ci.lower, upper: ci.upper, p: ci.p, dfMethod: dfs.method, seUnadjusted };
  };
  const contrastReports = contrasts.map((c, i) => report(c.name, ls[i]));
  const means = treatments.map((treatment, j) => {
    const r = report(treatment, unit[j]);
    return { treatment, estimate: r.estimate!, se: r.se!, df: r.df, lower: r.lower, upper: r.upper };
  });
  return { contrastReports, means };
}

export function crossedResult(p: CrossedResultParts): CrossedResult {
  const { d, L, ev } = p;
  const sol = solveShared(L, ev);
  const blups = trialBlups(d, L, ev, sol, p.ls);
  const trials = d.trials.map((tr, i) => ({
    trial: tr.trial,
    contrasts: p.contrasts.map((c, ci) => ({ name: c.name, blup: blups[i][ci], raw: null, rawSe: null, rawDf: null })),
  }));
  const confidence = p.options.confidence;
  return {
    minusTwoLogLik: ev.criterion,
    logLik: -ev.criterion / 2,
    converged: p.converged,
    iterations: p.iterations,
    variance: p.variance,
    means: p.means,
    contrasts: p.contrastReports,
    covariates: [],
    varianceComponents: p.components,
    trials,
    nObservations: d.nObservations,
    nTrials: d.trials.length,
    droppedPlots: d.droppedPlots,
    options: p.options,
    warnings: p.warnings,
    run: p.run,
    siteYearView: committeeView(d.sites, d.trials, d.years, L, ev, sol, p.contrasts, p.ls, p.contrastReports, p.components, confidence, p.varianceSeFrom),
  };
}

function committeeView(
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
  varianceSeFrom: string,
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
      'new site in a new year: estimate ± t(sites - 2) sqrt(se² + sum l² (treatment-by-site + treatment-by-year + treatment-by-trial variances)); next year at a known site: the site\'s BLUP ± t(sites - 2) sqrt(its prediction-error variance + sum l² (treatment-by-year + treatment-by-trial variances)); intervals on the variances by profile likelihood when asked for (oneStage.profile: true), otherwise Wald intervals on the log variance from ' + varianceSeFrom,
    caution: KNOWN_SITE_CAUTION,
  };
}
