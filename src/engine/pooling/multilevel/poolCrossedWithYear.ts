// The site-level pooling with a year effect crossed with the sites: regional mean, site, year and
// trial-within-site tau² with profile intervals, multilevel I², repeatability by site and the
// interval for a new site in a new year. Site estimates and leave-one-site-out are given by the
// nested model only (said in the notes).
import { chisqQuantile, normalCdf, normalQuantile } from '../../stats/distributions.js';
import type { CrossedGroup } from './crossedYearLikelihood.js';
import { fitCrossedYear } from './fitCrossedYear.js';
import { SITE_LEVEL_CAUTION, typicalSamplingVariance } from './poolSiteLevels.js';
import type { SiteGroup } from './siteTrialLikelihood.js';
import { siteLevelPrediction } from './siteLevelPrediction.js';
import { crossedPivotModel } from './pivotModels.js';
import type { SiteLevelItem, SiteLevelOptions, SiteLevelPooling } from './types.js';

export const CROSSED_DESCRIPTION =
  'Sites crossed with years, trials nested in sites: each trial contrast = regional mean + site effect (site tau²) + year effect shared by all sites that year (year tau²) + trial-within-site effect (trial tau²) + sampling error (the trial SE², taken as known). Variances by REML or ML (nested one-dimensional searches), intervals for each tau² by profile likelihood, the mean by GLS with a Wald interval, the new-site-in-a-new-year interval and probabilities by parametric bootstrap of the studentised prediction error (plug-in t interval beside it).';

export function poolCrossedWithYear(items: readonly SiteLevelItem[], groups: readonly SiteGroup[], method: string, options: SiteLevelOptions, notes: string[]): SiteLevelPooling {
  const yearOf = new Map(items.map((it) => [it.trial, it.year ?? null]));
  const missing = items.filter((it) => it.year === null || it.year === undefined).map((it) => it.trial);
  if (missing.length > 0) throw new Error(`site-by-year pooling needs every trial's year; missing for ${missing.slice(0, 10).join(', ')}`);
  const years = [...new Set(items.map((it) => it.year as number))].sort((a, b) => a - b);
  const index = new Map(years.map((y, i) => [y, i]));
  const crossed: CrossedGroup[] = groups.map((g) => ({ ...g, yearIndex: Int32Array.from(g.trials, (t) => index.get(yearOf.get(t) as number) as number) }));
  if (years.length < 2) throw new Error('site-by-year pooling needs trials from at least two years');
  if (years.length < 5) notes.push(`only ${years.length} years: year tau² rests on them and is very uncertain`);
  const profileLimit = options.crossedProfileLimit ?? 300;
  const withIntervals = items.length <= profileLimit;
  if (!withIntervals) notes.push(`profile-likelihood intervals for the three tau² are given up to ${profileLimit} trials (${items.length} here)`);
  const fit = fitCrossedYear(crossed, years.length, options.method, chisqQuantile(options.confidence, 1), withIntervals);
  const iv = fit.intervals;
  if (!fit.converged) notes.push('a tau² estimate reached the upper end of its search range; the fit is not trustworthy');
  notes.push("each site's shrunken estimate and leave-one-site-out are given by the nested model (levels \"site-and-trial\")");
  const z = normalQuantile(0.5 + options.confidence / 2);
  const se = Math.sqrt(fit.muVariance);
  const { siteTau2, trialTau2, yearTau2, mu } = fit;
  const between = siteTau2 + trialTau2 + yearTau2;
  const vTypical = typicalSamplingVariance(groups);
  const total = vTypical === null ? null : between + vTypical;
  const fitted = { mu, siteTau2, trialTau2, yearTau2 };
  const prediction = siteLevelPrediction({ mu, muVariance: fit.muVariance, between }, groups.length, groups.map((g) => g.y.length), () => crossedPivotModel(crossed, years.length, fitted, options.method, vTypical ?? 1), options, notes);
  return {
    levels: 'site-year-and-trial',
    years: years.length,
    method,
    sites: groups.length,
    trials: items.length,
    estimate: mu,
    se,
    lower: mu - z * se,
    upper: mu + z * se,
    p: 2 * (1 - normalCdf(Math.abs(mu / se))),
    logLik: fit.logLik,
    converged: fit.converged,
    evaluations: null,
    siteTau2,
    siteTau2Lower: iv ? iv.site.lower : null,
    siteTau2Upper: iv ? iv.site.upper : null,
    trialTau2,
    trialTau2Lower: iv ? iv.trial.lower : null,
    trialTau2Upper: iv ? iv.trial.upper : null,
    yearTau2,
    yearTau2Lower: iv ? iv.year.lower : null,
    yearTau2Upper: iv ? iv.year.upper : null,
    I2Site: total === null ? null : siteTau2 / total,
    I2Trial: total === null ? null : trialTau2 / total,
    I2Year: total === null ? null : yearTau2 / total,
    I2Total: total === null ? null : between / total,
    siteRepeatability: between > 0 ? siteTau2 / between : null,
    newSiteLower: prediction.lower,
    newSiteUpper: prediction.upper,
    newSiteProbPositive: prediction.probPositive,
    newSiteProbAboveThreshold: prediction.probAboveThreshold,
    newSitePrediction: prediction,
    siteEstimates: [],
    leaveOneSiteOut: [],
    description: CROSSED_DESCRIPTION,
    caution: SITE_LEVEL_CAUTION,
    notes,
  };
}
