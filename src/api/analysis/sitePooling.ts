// The site-level pooling beside each trial-level pool (twoStage.levels "site-and-trial" or
// "site-year-and-trial"):
// the same trials and estimates the trial-level pool used, grouped by their site.
import { poolSiteLevels } from '../../engine/pooling/multilevel/poolSiteLevels.js';
import type { SiteLevelItem } from '../../engine/pooling/multilevel/types.js';
import type { NetworkInput } from '../../engine/types.js';
import { twoStageSchema, type AnalysisSpec } from '../../spec/analysisSpec.js';
import { throwIfCancelled, type CallContext } from '../context.js';
import { ManyfieldError } from '../result.js';
import type { PooledEntry } from './report.js';

/** What the site pooling reads from a trial entry: its contrasts' estimates and SEs. */
interface TrialContrasts {
  readonly trial: string;
  readonly contrasts: readonly object[];
}

function estimateOf(t: TrialContrasts, name: string): { estimate: number; se: number } | null {
  for (const c of t.contrasts) {
    const r = c as { name?: unknown; estimate?: unknown; se?: unknown };
    if (r.name === name && typeof r.estimate === 'number' && typeof r.se === 'number' && r.se > 0) return { estimate: r.estimate, se: r.se };
  }
  return null;
}

export function addSiteLevels(pooled: readonly PooledEntry[], trials: readonly TrialContrasts[], network: NetworkInput, spec: AnalysisSpec, warnings: string[], ctx?: CallContext): PooledEntry[] {
  const options = spec.twoStage ?? twoStageSchema.parse({});
  if (options.levels === 'trial') return [...pooled];
  if (options.tau2 !== 'reml' && options.tau2 !== 'ml')
    throw new ManyfieldError('invalid-argument', `twoStage.levels "${options.levels}" estimates the site and trial tau² by likelihood: set twoStage.tau2 to "reml" or "ml" (got "${options.tau2}")`);
  const siteOf = new Map(network.trials.map((t) => [t.trial, t.site ?? null]));
  const yearOf = new Map(network.trials.map((t) => [t.trial, t.year ?? null]));
  const crossedWithYear = options.levels === 'site-year-and-trial';
  if (crossedWithYear) {
    const noYear = network.trials.filter((t) => t.year === undefined || t.year === null).map((t) => t.trial);
    if (noYear.length > 0) throw new ManyfieldError('invalid-argument', `twoStage.levels "site-year-and-trial" needs each trial's year (columns.year with --data); no year for ${noYear.length} trial(s): ${noYear.slice(0, 10).join(', ')}`);
  }
  const withoutSite = network.trials.filter((t) => !t.site).map((t) => t.trial);
  if (withoutSite.length > 0)
    warnings.push(`site-and-trial pooling: ${withoutSite.length} trial(s) have no site and count as a site of their own: ${withoutSite.slice(0, 20).join(', ')}${withoutSite.length > 20 ? ', …' : ''}`);
  const byTrial = new Map(trials.map((t) => [t.trial, t]));
  return pooled.map((p) => {
    throwIfCancelled(ctx);
    const items: SiteLevelItem[] = [];
    for (const w of p.weights) {
      const t = byTrial.get(w.trial);
      const e = t ? estimateOf(t, p.name) : null;
      if (e) items.push({ trial: w.trial, site: siteOf.get(w.trial) ?? w.trial, year: yearOf.get(w.trial) ?? null, ...e });
    }
    ctx?.onProgress?.({ stage: 'site-level pooling', step: p.name, fraction: null });
    let siteLevels;
    try {
      siteLevels = poolSiteLevels(items, {
        method: options.tau2 === 'ml' ? 'ml' : 'reml', confidence: spec.confidence, threshold: spec.threshold, crossedWithYear,
        prediction: options.prediction === 'plug-in-t' ? 'plug-in-t' : 'bootstrap-tau2', predictionDraws: options.siteLevelDraws, predictionSeed: options.predictionSeed, signal: ctx?.signal,
      });
    } catch (e) {
      throwIfCancelled(ctx);
      throw new ManyfieldError('invalid-argument', `contrast "${p.name}": ${(e as Error).message}`);
    }
    return { ...p, siteLevels };
  });
}
