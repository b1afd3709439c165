// What a committee reads from the crossed model: how the treatment-by-environment variance
// splits into a site part (repeatable at a site), a year part (shared by all sites in a season)
// and a site-year part (neither); the share that belongs to the site; each contrast's
// prediction for a new site in a new year; and for next year at each known site.
//
// New site, new year: estimate ± t(sites - 2) sqrt(se² + sum l² (s²_TxS + s²_TxY + s²_TxT)) as the
// fit gives it; by default siteYearNewSite.ts then replaces it with the bootstrap interval (the
// plug-in kept in plugInT).
// Next year at a known site: the site's BLUP of the contrast ± t(sites - 2)
// sqrt(PEV + sum l² (s²_TxY + s²_TxT)), PEV the prediction-error variance of the BLUP. The
// t degrees of freedom (sites - 2, at least 1, for both) are our construction after the
// plug-in new-site interval of two-stage pooling; t(years - 2) for the known site was tried and
// gave, with three years, intervals wider than a new site's.
import { tQuantile } from '../../stats/distributions.js';
import type { NewSiteNewYearPrediction } from './newSiteNewYearBootstrap.js';

/** What the new-site-in-a-new-year prediction adds to the plug-in interval of the fit. */
export type NewSiteNewYearMethod = Pick<NewSiteNewYearPrediction, 'method' | 'probPositive' | 'probAboveThreshold' | 'plugInT' | 'trialsUsed' | 'sitesUsed' | 'draws' | 'seed' | 'note'>;

export type SplitPart = 'site' | 'year' | 'site-year';

export interface SiteYearSplit {
  part: SplitPart;
  /** The model term that carries this part. */
  term: 'treatment-by-site' | 'treatment-by-year' | 'treatment-by-trial';
  /** Variance per treatment effect; null when the term is not in the model. */
  variance: number | null;
  /** Share of the treatment-by-environment variance. */
  share: number | null;
  lower: number | null;
  upper: number | null;
  /** 'wald-log': estimate x exp(± z se/estimate), from the observed information. */
  intervalMethod: 'profile-likelihood' | 'wald-log' | 'none';
}

export interface KnownSitePrediction {
  site: string;
  /** Years with a trial at this site (the past the prediction rests on). */
  pastYears: number[];
  estimate: number;
  predictionSe: number;
  lower: number;
  upper: number;
}

export interface SiteYearContrast {
  name: string;
  estimate: number | null;
  /** sum l² times each part: the contrast's own variance between sites, years and site-years. */
  siteVariance: number;
  yearVariance: number;
  siteYearVariance: number;
  /**
   * lower/upper by `method` (oneStage.prediction; siteYearNewSite.ts); df and sd are the plug-in
   * interval's, whose ends are in plugInT.
   */
  newSiteNewYear: ({ lower: number; upper: number; df: number; sd: number } & Partial<NewSiteNewYearMethod>) | null;
  /** Next year at each known site; empty without a treatment-by-site term. */
  nextYearAtSite: KnownSitePrediction[];
}

export interface SiteYearView {
  split: SiteYearSplit[];
  /** Share of the treatment-by-environment variance that belongs to the site (null without treatment-by-site). */
  siteRepeatability: number | null;
  sites: number;
  years: number;
  contrasts: SiteYearContrast[];
  method: string;
  caution: string;
}

export const KNOWN_SITE_CAUTION =
  "A site's next-year prediction rests on that site's past years only: a site with few years is pulled toward the regional mean, and a change at the site (soil, rotation, management) is not in it. These results summarise these trials only; follow label limits, local rules and local agronomic advice.";

export function tCritical(confidence: number, df: number): number {
  return tQuantile(1 - (1 - confidence) / 2, Math.max(1, df));
}
