// Public shapes of the site-and-trial pooling (trials nested in sites). Plain numbers or null,
// so the result serialises to JSON.

export interface SiteLevelItem {
  trial: string;
  site: string;
  /** The trial's year; used when the years are crossed with the sites. */
  year?: number | null;
  estimate: number;
  se: number;
}

export interface SiteLevelOptions {
  /** REML (default) or ML. */
  method: 'reml' | 'ml';
  confidence: number;
  threshold: number;
  /** Refit without each site in turn (default true; skipped above `leaveOneSiteOutLimit` sites). */
  leaveOneSiteOut?: boolean;
  leaveOneSiteOutLimit?: number;
  /** Also a year effect shared by every trial of a year, crossed with the sites. */
  crossedWithYear?: boolean;
  /** Largest number of trials the crossed model is fitted for (default 1000), and given profile intervals for (default 300). */
  crossedTrialLimit?: number;
  crossedProfileLimit?: number;
  /** New-site prediction: 'bootstrap-tau2' (default) gives the bootstrap of the studentised prediction error here ('bootstrap-pivot'); 'plug-in-t' the plug-in interval. */
  prediction?: 'bootstrap-tau2' | 'plug-in-t';
  /** Bootstrap refits (default 1000) and seed. */
  predictionDraws?: number;
  predictionSeed?: number;
  signal?: AbortSignal;
}

/** How the new-site interval and probabilities were made, with the plug-in interval beside. */
export interface SiteLevelPrediction {
  method: 'bootstrap-pivot' | 'plug-in-t';
  lower: number | null;
  upper: number | null;
  probPositive: number | null;
  probAboveThreshold: number | null;
  plugInT: { lower: number | null; upper: number | null };
  draws: number | null;
  seed: number | null;
  description: string;
}

/** A known site: its shrunken (BLUP) mean effect and what to expect from its next trial. */
export interface SiteEstimate {
  site: string;
  trials: number;
  /** Plain inverse-variance mean of the site's own trial estimates (no shrinkage), for comparison. */
  ownMean: number;
  /** mu + the site's BLUP: the site's effect pulled towards the regional mean by how little its trials say. */
  estimate: number;
  /** Prediction-error SE of that estimate (includes the uncertainty of mu). */
  se: number;
  /** Interval for the true effect in the site's next trial (a new year at this site): estimate ± t·sqrt(se² + trial tau²). */
  nextTrialLower: number | null;
  nextTrialUpper: number | null;
}

export interface LeaveOneSiteOutRow {
  site: string;
  estimate: number | null;
  se: number | null;
  siteTau2: number | null;
  trialTau2: number | null;
}

export interface SiteLevelPooling {
  /** "site-and-trial": trials nested in sites; "site-year-and-trial": also a year effect crossed with the sites. */
  levels: 'site-and-trial' | 'site-year-and-trial';
  /** Years in the crossed model (null for the nested one). */
  years: number | null;
  method: string;
  sites: number;
  trials: number;
  estimate: number | null;
  se: number | null;
  /** Wald (normal) interval and p for the regional mean. */
  lower: number | null;
  upper: number | null;
  p: number | null;
  logLik: number | null;
  converged: boolean;
  /** Likelihood evaluations of the fit (null for the crossed model, whose searches are not counted). */
  evaluations: number | null;
  /** Variance of true effects between sites (site tau²) and between trials within a site (trial tau²), with profile-likelihood intervals. */
  siteTau2: number | null;
  siteTau2Lower: number | null;
  siteTau2Upper: number | null;
  trialTau2: number | null;
  trialTau2Lower: number | null;
  trialTau2Upper: number | null;
  /** Variance of true effects between years, shared by every site (crossed model only; null otherwise). */
  yearTau2: number | null;
  yearTau2Lower: number | null;
  yearTau2Upper: number | null;
  /** Shares of the total variance (site tau² + trial tau² + typical sampling variance) at each level. */
  I2Site: number | null;
  I2Trial: number | null;
  I2Year: number | null;
  I2Total: number | null;
  /** Share of the between-trial variance in true effects that belongs to the site: site tau² / (site tau² + year tau² + trial tau²). */
  siteRepeatability: number | null;
  /** Interval for the true effect at a new site in a new year, by the method in newSitePrediction (the bootstrap of the studentised prediction error by default). */
  newSiteLower: number | null;
  newSiteUpper: number | null;
  /** Probability that the true effect at a new site is above 0 and above the threshold, from the same predictive distribution. */
  newSiteProbPositive: number | null;
  newSiteProbAboveThreshold: number | null;
  /** Which method made the four numbers above, with the plug-in t interval mu ± t(sites - 2)·sqrt(SE² + sum of tau²) beside it. */
  newSitePrediction: SiteLevelPrediction | null;
  siteEstimates: SiteEstimate[];
  leaveOneSiteOut: LeaveOneSiteOutRow[];
  description: string;
  caution: string;
  notes: string[];
}
