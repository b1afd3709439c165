// The committee view's new-site-in-a-new-year prediction by the method the spec asks for
// (newSiteNewYearBootstrap.ts), laid over the plug-in interval the crossed fit reports: each
// contrast's newSiteNewYear gets the chosen interval, the probabilities, the method's name and the
// plug-in interval beside it. Runs after the fit, from the fit's own numbers and the trials' own
// estimates of each contrast (trialOwnContrasts.ts).
import type { NetworkInput } from '../../types.js';
import type { ResolvedContrast } from '../../contrasts/resolve.js';
import type { PredictionMethod } from '../../pooling/types.js';
import { contrastVector, crossedData, type CrossedData } from './crossedData.js';
import type { CrossedResult } from './fitCrossed.js';
import { newSiteNewYearPrediction, type OwnTrialEstimate } from './newSiteNewYearBootstrap.js';
import type { SiteYearContrast } from './siteYearView.js';
import type { CrossedTerm } from './terms.js';
import { trialOwnContrasts } from './trialOwnContrasts.js';

export interface SiteYearNewSiteOptions {
  /** The network's crossedData for these terms, when already built (the fit's). */
  readonly data?: CrossedData;
  readonly random: readonly CrossedTerm[];
  readonly yearAsFixed: boolean;
  readonly method: PredictionMethod;
  readonly confidence: number;
  readonly threshold: number;
  readonly draws?: number;
  readonly seed: number;
  readonly signal?: AbortSignal;
  /** Refits done so far, once the bootstrap has taken more than a second. */
  readonly onProgress?: (contrast: string, fraction: number) => void;
}

export const BOOTSTRAP_PIVOT_WORDS =
  'new site in a new year: parametric bootstrap of the studentised prediction error (bootstrap-pivot; Lawless & Fredette 2005) on the trials\' own estimates of each contrast, drawn at the one-stage variance parts and refitted by REML as sites crossed with years, centred on the one-stage estimate and scaled by sqrt(se² + the three parts), the plug-in interval estimate ± t(sites - 2) sqrt(se² + the three parts) beside it';
export const PLUG_IN_WORDS = 'new site in a new year: estimate ± t(sites - 2) sqrt(se² + sum l² (treatment-by-site + treatment-by-year + treatment-by-trial variances)) (plug-in-t)';

export function withSiteYearNewSite(result: CrossedResult, network: NetworkInput, contrasts: readonly ResolvedContrast[], options: SiteYearNewSiteOptions): CrossedResult {
  const view = result.siteYearView;
  const bootstrap = options.method !== 'plug-in-t';
  const d = options.data ?? crossedData(network, options.random, options.yearAsFixed);
  const ls = contrasts.map((c) => contrastVector(d.treatments, c));
  const own = bootstrap ? trialOwnContrasts(d, ls) : [];
  const has = (t: CrossedTerm) => options.random.includes(t);
  const viewContrasts = view.contrasts.map((c, i): SiteYearContrast => {
    const r = result.contrasts[i];
    if (!c.newSiteNewYear || r.estimate === null || r.se === null) return c;
    const parts = { site: has('treatment-by-site') ? c.siteVariance : null, year: has('treatment-by-year') ? c.yearVariance : null, siteYear: has('treatment-by-trial') ? c.siteYearVariance : null };
    const ownList: OwnTrialEstimate[] = [];
    d.trials.forEach((tr, t) => {
      const e = own[t]?.[i];
      if (e) ownList.push({ trial: tr.trial, site: d.sites[tr.site], year: d.years[tr.year], estimate: e.estimate, se: e.se });
    });
    const p = newSiteNewYearPrediction(r.estimate, r.se, parts, view.sites, ownList, {
      method: options.method,
      confidence: options.confidence,
      threshold: options.threshold,
      draws: options.draws,
      seed: options.seed,
      signal: options.signal,
      onProgress: (f) => options.onProgress?.(c.name, f),
    });
    return {
      ...c,
      newSiteNewYear: {
        ...c.newSiteNewYear,
        lower: p.lower,
        upper: p.upper,
        method: p.method,
        probPositive: p.probPositive,
        probAboveThreshold: p.probAboveThreshold,
        plugInT: p.plugInT,
        trialsUsed: p.trialsUsed,
        sitesUsed: p.sitesUsed,
        draws: p.draws,
        seed: p.seed,
        note: p.note,
      },
    };
  });
  // the fit states the plug-in rule first; say instead which method made the interval
  const rest = view.method.replace(/^new site in a new year: [^;]*; /, '');
  return { ...result, siteYearView: { ...view, contrasts: viewContrasts, method: `${bootstrap ? BOOTSTRAP_PIVOT_WORDS : PLUG_IN_WORDS}; ${rest}` } };
}
