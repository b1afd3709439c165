// The crossed one-stage model's prediction for a new site in a new year, for one contrast l'beta.
// Under the model the contrast at a new site in a new year is l'beta + its treatment-by-site,
// -by-year and -by-trial parts, with variances sum l² times each term's variance (the contrast's
// parts).
//
// 'plug-in-t': estimate ± t(sites - 2) sqrt(se² + the three parts), the parts taken as known (our
// construction after the two-stage plug-in interval).
// 'bootstrap-pivot' (our construction, reasoned as the one-stage new-site bootstrap of
// newSitePrediction.ts is, not published for this model): the uncertainty of the parts is taken
// from the crossed two-stage machinery run on the trials' own estimates of the contrast with their
// SEs (trialOwnContrasts.ts), which under the one-stage model follow the two-stage crossed model
// with these very parts. Data sets of own estimates are drawn from that model at the one-stage
// parts (the trials' SE² as known sampling variances; a term not in the one-stage model held at
// zero), each refitted by REML, and the studentised prediction error
// q = (new effect - mu*) / sqrt(var(mu*) + parts*) recorded (Lawless & Fredette 2005, as in
// bootstrapPivotPrediction.ts). The centre and its SE come from the one-stage fit: the interval
// is estimate + sqrt(se² + parts) times the 2.5% and 97.5% points of q, and P(effect > x) the
// share of q above (x - estimate) / sqrt(se² + parts). Deterministic given the seed.
import { tQuantile, tUpper } from '../../stats/distributions.js';
import { bootstrapPivotPrediction, DEFAULT_PIVOT_DRAWS, type PivotFit, type PivotModel } from '../../pooling/multilevel/bootstrapPivotPrediction.js';
import { crossedLogLik, type CrossedGroup } from '../../pooling/multilevel/crossedYearLikelihood.js';
import { nestedMaximum } from '../../pooling/multilevel/nestedMaximum.js';
import { searchUpper } from '../../pooling/multilevel/fitSiteTrial.js';
import { typicalSamplingVariance } from '../../pooling/multilevel/poolSiteLevels.js';
import { crossedLocalRefit } from '../../pooling/multilevel/crossedLocalRefit.js';
import type { PredictionMethod } from '../../pooling/types.js';

/** The contrast's variance parts (sum l² times each term's variance); null where the term is not in the model. */
export interface ContrastParts {
  site: number | null;
  year: number | null;
  siteYear: number | null;
}

/** A trial's own estimate of the contrast, with its site and year (any labels). */
export interface OwnTrialEstimate {
  trial: string;
  site: string;
  year: number;
  estimate: number;
  se: number;
}

export interface NewSiteNewYearOptions {
  /** 'bootstrap-tau2' (the one-stage spec's name for the bootstrap default) gives 'bootstrap-pivot' here. */
  readonly method: PredictionMethod;
  readonly confidence: number;
  readonly threshold: number;
  readonly draws?: number;
  readonly seed: number;
  readonly signal?: AbortSignal;
  /** Called (fraction done) only once the work has taken more than a second. */
  readonly onProgress?: (fraction: number) => void;
}

export interface PlugInPrediction {
  lower: number;
  upper: number;
  probPositive: number;
  probAboveThreshold: number;
}

export interface NewSiteNewYearPrediction extends PlugInPrediction {
  /** Which method made lower, upper and the probabilities. */
  method: 'bootstrap-pivot' | 'plug-in-t';
  /** The plug-in interval and probabilities (t on sites - 2 df), kept beside the bootstrap. */
  plugInT: PlugInPrediction;
  /** Trials and sites whose own estimates the bootstrap drew from (null with plug-in-t). */
  trialsUsed: number | null;
  sitesUsed: number | null;
  draws: number | null;
  seed: number | null;
  /** Refits that did not settle and were left out. */
  failed: number | null;
  note: string;
}

export function newSiteNewYearPrediction(
  estimate: number,
  se: number,
  parts: ContrastParts,
  sites: number,
  own: readonly OwnTrialEstimate[],
  options: NewSiteNewYearOptions,
): NewSiteNewYearPrediction {
  const between = (parts.site ?? 0) + (parts.siteYear ?? 0) + (parts.year ?? 0);
  const sd = Math.sqrt(se * se + between);
  const df = Math.max(1, sites - 2);
  const crit = tQuantile(1 - (1 - options.confidence) / 2, df);
  const plugInT: PlugInPrediction = {
    lower: estimate - crit * sd,
    upper: estimate + crit * sd,
    probPositive: tUpper(-estimate / sd, df),
    probAboveThreshold: tUpper((options.threshold - estimate) / sd, df),
  };
  const plain = (note: string): NewSiteNewYearPrediction => ({ method: 'plug-in-t', ...plugInT, plugInT, trialsUsed: null, sitesUsed: null, draws: null, seed: null, failed: null, note });
  const plugInNote = `plug-in-t: estimate ± t(${df}) sqrt(se² + sum l² (treatment-by-site + treatment-by-year + treatment-by-trial variances)), the variances taken as known`;
  if (options.method === 'plug-in-t') return plain(plugInNote);
  const usable = own.filter((t) => Number.isFinite(t.estimate) && t.se > 0 && Number.isFinite(t.se));
  const groups = crossedGroups(usable);
  if (groups.list.length < 3) return plain(`${plugInNote}; the bootstrap needs the own estimates of trials at three sites or more (${groups.list.length} here)`);
  if (parts.year !== null && groups.years < 2) return plain(`${plugInNote}; the bootstrap needs own estimates from two years or more to refit the year part`);
  const fitted: PivotFit = { mu: estimate, muVariance: se * se, between };
  const model = withProgress(oneStagePivotModel(groups.list, groups.years, estimate, parts, typicalSamplingVariance(groups.list) ?? 1), options);
  const b = bootstrapPivotPrediction(model, fitted, groups.list.map((g) => g.y.length), {
    confidence: options.confidence,
    thresholds: [0, options.threshold],
    draws: options.draws ?? DEFAULT_PIVOT_DRAWS,
    seed: options.seed,
    signal: options.signal,
  });
  const failed = b.failed > 0 ? `; ${b.failed} refits did not settle and were left out` : '';
  return {
    method: 'bootstrap-pivot',
    lower: b.lower,
    upper: b.upper,
    probPositive: b.probAbove[0],
    probAboveThreshold: b.probAbove[1],
    plugInT,
    trialsUsed: usable.length,
    sitesUsed: groups.list.length,
    draws: b.draws,
    seed: b.seed,
    failed: b.failed,
    note: `bootstrap-pivot: the studentised prediction error from ${b.draws} data sets of ${usable.length} trials' own estimates (${groups.list.length} sites) drawn at the one-stage variance parts and refitted by REML, centred and scaled by the one-stage estimate and sqrt(se² + parts); seed ${b.seed}${failed}`,
  };
}

/** Own estimates grouped by site (first-seen order), years indexed over those present. */
export function crossedGroups(own: readonly OwnTrialEstimate[]): { list: CrossedGroup[]; years: number } {
  const years = [...new Set(own.map((t) => t.year))].sort((a, b) => a - b);
  const yearIndex = new Map(years.map((y, i) => [y, i]));
  const bySite = new Map<string, OwnTrialEstimate[]>();
  for (const t of own) {
    const list = bySite.get(t.site) ?? [];
    list.push(t);
    bySite.set(t.site, list);
  }
  const list = [...bySite].map(([site, ts]): CrossedGroup => ({
    site,
    trials: ts.map((t) => t.trial),
    y: Float64Array.from(ts, (t) => t.estimate),
    v: Float64Array.from(ts, (t) => t.se * t.se),
    yearIndex: Int32Array.from(ts, (t) => yearIndex.get(t.year) as number),
  }));
  return { list, years: years.length };
}

/**
 * The two-stage crossed model as a bootstrap model at the one-stage parts. Its draws follow the
 * same order as the two-stage pool's crossed model (years, then per site its effect and per trial
 * its own and its sampling error, then the new site), and with all three parts present it refits
 * the same way, so fed the two-stage fit it gives the two-stage pool's interval draw for draw.
 * A part not in the model is simulated and refitted as zero.
 */
export function oneStagePivotModel(groups: readonly CrossedGroup[], years: number, mu: number, parts: ContrastParts, scale: number): PivotModel {
  const yearDraws = new Float64Array(years);
  // order [year, site, trial], as the two-stage crossed refit searches them
  const value = [parts.year ?? 0, parts.site ?? 0, parts.siteYear ?? 0];
  const active = [parts.year !== null, parts.site !== null, parts.siteYear !== null].flatMap((on, k) => (on ? [k] : []));
  const sd = value.map(Math.sqrt);
  // summed site, site-year, year: the two-stage pool's order (same bits)
  const total = value[1] + value[2] + value[0];
  // the groups once, their estimates re-pointed at each refit's arrays
  const data = groups.map((g) => ({ ...g }));
  const expand = (x: readonly number[]) => {
    const full = [0, 0, 0];
    active.forEach((k, i) => (full[k] = x[i]));
    return full;
  };
  return {
    simulate(normal, y) {
      for (let i = 0; i < years; i++) yearDraws[i] = sd[0] * normal();
      for (let g = 0; g < groups.length; g++) {
        const site = sd[1] * normal();
        const { v, yearIndex } = groups[g];
        const out = y[g];
        for (let j = 0; j < v.length; j++) out[j] = mu + site + yearDraws[yearIndex[j]] + sd[2] * normal() + Math.sqrt(v[j]) * normal();
      }
      return mu + Math.sqrt(total) * normal();
    },
    refit(y) {
      data.forEach((g, i) => (g.y = y[i]));
      const at = (full: readonly number[]) => crossedLogLik(data, years, full[1], full[2], full[0], 'reml');
      const f = (x: readonly number[]) => at(expand(x)).logLik;
      if (active.length === 0) {
        const fit = at([0, 0, 0]);
        return { mu: fit.mu, muVariance: fit.muVariance, between: 0 };
      }
      const local = crossedLocalRefit(data, years, 'reml', active, active.map((k) => value[k]), scale);
      let x = local ? active.map((k) => local[k]) : null;
      if (!x) {
        // the global nested searches, as the two-stage crossed fit does when the local one fails
        const upper = searchUpper(data);
        const best = nestedMaximum(f, active.length, upper);
        if (!best.x.every((v) => v < upper)) return null;
        x = best.x;
      }
      const full = expand(x);
      const fit = at(full);
      return Number.isFinite(fit.logLik) ? { mu: fit.mu, muVariance: fit.muVariance, between: full[0] + full[1] + full[2] } : null;
    },
  };
}

/** Report progress of the refits once they have taken more than a second. */
function withProgress(model: PivotModel, options: NewSiteNewYearOptions): PivotModel {
  if (!options.onProgress) return model;
  const started = Date.now();
  const draws = options.draws ?? DEFAULT_PIVOT_DRAWS;
  let done = 0;
  return {
    simulate: model.simulate,
    refit(y) {
      done++;
      if ((done & 15) === 0 && Date.now() - started > 1000) options.onProgress?.(done / draws);
      return model.refit(y);
    },
  };
}
