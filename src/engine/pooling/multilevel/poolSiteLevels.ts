// Two-stage pooling with trials nested in sites: the regional mean, the site and the
// trial-within-site tau² with profile-likelihood intervals, multilevel I², the new-site interval,
// each known site's shrunken estimate and its next-trial interval, and leave-one-site-out.
import { chisqQuantile, normalCdf, normalQuantile, tQuantile } from '../../stats/distributions.js';
import { fitSiteTrial, profileInterval } from './fitSiteTrial.js';
import { siteBlup, type SiteGroup } from './siteTrialLikelihood.js';
import { poolCrossedWithYear } from './poolCrossedWithYear.js';
import { nestedPivotModel } from './pivotModels.js';
import { siteLevelPrediction } from './siteLevelPrediction.js';
import type { LeaveOneSiteOutRow, SiteEstimate, SiteLevelItem, SiteLevelOptions, SiteLevelPooling } from './types.js';

export const SITE_LEVEL_DESCRIPTION =
  'Trials nested in sites: each trial contrast = regional mean + site effect (variance site tau²) + trial-within-site effect (variance trial tau²) + sampling error (the trial SE², taken as known). Variances by restricted (REML) or full (ML) likelihood; intervals for each tau² by profile likelihood; the mean by GLS with a Wald interval; the new-site interval and probabilities by parametric bootstrap of the studentised prediction error (plug-in t interval beside it); next-trial intervals at known sites with t on (sites - 2) df and the variances plugged in.';

export const SITE_LEVEL_CAUTION =
  "A site's own estimate and its next-trial interval rest on that site's past trials only (shrunk towards the regional mean by the site tau²); they say what these trials showed, not a guarantee for next season, and hold only while management and conditions at the site stay like its past years.";

export function groupBySite(items: readonly SiteLevelItem[]): SiteGroup[] {
  const bySite = new Map<string, SiteLevelItem[]>();
  for (const it of items) {
    const list = bySite.get(it.site);
    if (list) list.push(it);
    else bySite.set(it.site, [it]);
  }
  return [...bySite.entries()].map(([site, list]) => ({
    site,
    trials: list.map((t) => t.trial),
    y: Float64Array.from(list.map((t) => t.estimate)),
    v: Float64Array.from(list.map((t) => t.se * t.se)),
  }));
}

/** Higgins & Thompson's (2002) typical within-trial variance: (k - 1) Σw / ((Σw)² - Σw²), w = 1/v. */
export function typicalSamplingVariance(groups: readonly SiteGroup[]): number | null {
  let k = 0;
  let sw = 0;
  let sw2 = 0;
  for (const g of groups)
    for (const v of g.v) {
      k++;
      sw += 1 / v;
      sw2 += 1 / (v * v);
    }
  const denominator = sw * sw - sw2;
  return k > 1 && denominator > 0 ? ((k - 1) * sw) / denominator : null;
}

function emptyResult(groups: readonly SiteGroup[], method: string, notes: string[]): SiteLevelPooling {
  return {
    levels: 'site-and-trial', years: null, method, sites: groups.length, trials: groups.reduce((n, g) => n + g.y.length, 0),
    estimate: null, se: null, lower: null, upper: null, p: null, logLik: null, converged: false, evaluations: 0,
    siteTau2: null, siteTau2Lower: null, siteTau2Upper: null, trialTau2: null, trialTau2Lower: null, trialTau2Upper: null,
    yearTau2: null, yearTau2Lower: null, yearTau2Upper: null,
    I2Site: null, I2Trial: null, I2Year: null, I2Total: null, siteRepeatability: null,
    newSiteLower: null, newSiteUpper: null, newSiteProbPositive: null, newSiteProbAboveThreshold: null, newSitePrediction: null,
    siteEstimates: [], leaveOneSiteOut: [], description: SITE_LEVEL_DESCRIPTION, caution: SITE_LEVEL_CAUTION, notes,
  };
}

export function poolSiteLevels(items: readonly SiteLevelItem[], options: SiteLevelOptions): SiteLevelPooling {
  for (const it of items)
    if (!(Number.isFinite(it.estimate) && Number.isFinite(it.se) && it.se > 0)) throw new Error(`trial ${it.trial}: the estimate and a positive SE are needed for site-level pooling (got ${it.estimate}, ${it.se})`);
  const groups = groupBySite(items);
  const method = options.method === 'ml' ? 'maximum likelihood (ML)' : 'restricted maximum likelihood (REML)';
  const notes: string[] = [];
  const repeated = groups.filter((g) => g.y.length > 1).length;
  if (groups.length < 2) return emptyResult(groups, method, [`site-level pooling needs trials from at least two sites (found ${groups.length})`]);
  if (repeated === 0) return emptyResult(groups, method, ['no site has two or more trials, so the site and trial-within-site tau² cannot be told apart; use the trial-level pooling']);
  if (repeated < 3) notes.push(`only ${repeated} site(s) have two or more trials: the split between site and trial-within-site tau² rests on them and is very uncertain`);
  const crossedLimit = options.crossedTrialLimit ?? 1000;
  if (options.crossedWithYear && items.length <= crossedLimit) return poolCrossedWithYear(items, groups, method, options, notes);
  if (options.crossedWithYear)
    notes.push(`the year effect crossed with sites is not fitted above ${crossedLimit} trials (${items.length} here; its nested searches are still too slow for networks this large): this is the site-and-trial model without a year effect`);

  const fit = fitSiteTrial(groups, options.method);
  if (!fit.converged) notes.push('a tau² estimate reached the upper end of its search range; the fit is not trustworthy');
  const z = normalQuantile(0.5 + options.confidence / 2);
  const chisqCut = chisqQuantile(options.confidence, 1);
  const siteCi = profileInterval(groups, options.method, fit, 'site', chisqCut);
  const trialCi = profileInterval(groups, options.method, fit, 'trial', chisqCut);
  const se = Math.sqrt(fit.muVariance);
  const { siteTau2, trialTau2, mu } = fit;
  if (siteTau2 === 0) notes.push('site tau² is on the zero boundary: no repeatable site-to-site difference is detected');
  if (trialTau2 === 0) notes.push('trial-within-site tau² is on the zero boundary: the trials of one site agree up to their sampling error');

  const vTypical = typicalSamplingVariance(groups);
  const total = vTypical === null ? null : siteTau2 + trialTau2 + vTypical;
  const between = siteTau2 + trialTau2;
  const tMult = groups.length >= 3 ? tQuantile(0.5 + options.confidence / 2, groups.length - 2) : null;
  if (tMult === null) notes.push('prediction intervals need at least three sites');
  const fitted = { mu, siteTau2, trialTau2 };
  const prediction = siteLevelPrediction({ mu, muVariance: fit.muVariance, between }, groups.length, groups.map((g) => g.y.length), () => nestedPivotModel(groups, fitted, options.method), options, notes);

  const siteEstimates: SiteEstimate[] = groups.map((g) => {
    const b = siteBlup(g, siteTau2, trialTau2, mu, fit.muVariance);
    let sw = 0;
    let swy = 0;
    for (let j = 0; j < g.y.length; j++) {
      const w = 1 / (g.v[j] + trialTau2);
      sw += w;
      swy += w * g.y[j];
    }
    const half = tMult === null ? null : tMult * Math.sqrt(b.variance + trialTau2);
    return { site: g.site, trials: g.y.length, ownMean: swy / sw, estimate: b.estimate, se: Math.sqrt(Math.max(0, b.variance)), nextTrialLower: half === null ? null : b.estimate - half, nextTrialUpper: half === null ? null : b.estimate + half };
  });

  const limit = options.leaveOneSiteOutLimit ?? 200;
  let leaveOneSiteOut: LeaveOneSiteOutRow[] = [];
  if (options.leaveOneSiteOut !== false) {
    if (groups.length > limit) notes.push(`leave-one-site-out skipped: ${groups.length} sites (more than ${limit})`);
    else leaveOneSiteOut = groups.map((g) => leaveOut(groups, g.site, options.method));
  }

  return {
    levels: 'site-and-trial',
    years: null,
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
    evaluations: fit.evaluations,
    siteTau2,
    siteTau2Lower: siteCi.lower,
    siteTau2Upper: siteCi.upper,
    trialTau2,
    trialTau2Lower: trialCi.lower,
    trialTau2Upper: trialCi.upper,
    yearTau2: null,
    yearTau2Lower: null,
    yearTau2Upper: null,
    I2Site: total === null ? null : siteTau2 / total,
    I2Trial: total === null ? null : trialTau2 / total,
    I2Year: null,
    I2Total: total === null ? null : between / total,
    siteRepeatability: between > 0 ? siteTau2 / between : null,
    newSiteLower: prediction.lower,
    newSiteUpper: prediction.upper,
    newSiteProbPositive: prediction.probPositive,
    newSiteProbAboveThreshold: prediction.probAboveThreshold,
    newSitePrediction: prediction,
    siteEstimates,
    leaveOneSiteOut,
    description: SITE_LEVEL_DESCRIPTION,
    caution: SITE_LEVEL_CAUTION,
    notes,
  };
}

function leaveOut(groups: readonly SiteGroup[], site: string, method: 'reml' | 'ml'): LeaveOneSiteOutRow {
  const rest = groups.filter((g) => g.site !== site);
  if (rest.length < 2 || !rest.some((g) => g.y.length > 1)) return { site, estimate: null, se: null, siteTau2: null, trialTau2: null };
  const f = fitSiteTrial(rest, method);
  return { site, estimate: f.mu, se: Math.sqrt(f.muVariance), siteTau2: f.siteTau2, trialTau2: f.trialTau2 };
}
