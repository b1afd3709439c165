// Start values for a large crossed fit: the same model fitted by AI-REML on every k-th site (all
// of their trials), about SUBSAMPLE_SITES sites. Its variance ratios are near the full data's, so
// the full search needs fewer of its (costly) Newton steps; on its own it costs a fraction of one.
// Only for networks of more than 2 x SUBSAMPLE_SITES sites; null when the subsample cannot be fitted.
import type { CrossedData } from './crossedData.js';
import { crossedLayout, type CrossedLayout } from './crossedLayout.js';
import { averageInformationSearch } from './averageInformationSearch.js';

export const SUBSAMPLE_SITES = 60;

export function subsampleStart(d: CrossedData, L: CrossedLayout, fixedZero: readonly number[], signal?: AbortSignal): Float64Array | null {
  if (L.nSites <= 2 * SUBSAMPLE_SITES) return null;
  const every = Math.floor(L.nSites / SUBSAMPLE_SITES);
  const kept = d.trials.filter((t) => t.site % every === 0);
  const years = [...new Set(kept.map((t) => t.year))].sort((a, b) => a - b);
  // the same years as the full data, so that fixed years and year terms keep their meaning
  if (years.length !== L.nYears) return null;
  const siteIndex = new Map<number, number>();
  for (const t of kept) if (!siteIndex.has(t.site)) siteIndex.set(t.site, siteIndex.size);
  const sub: CrossedData = {
    treatments: d.treatments,
    sites: [...siteIndex.keys()].map((s) => d.sites[s]),
    years: d.years,
    trials: kept.map((t) => ({ ...t, site: siteIndex.get(t.site)! })),
    nObservations: kept.reduce((n, t) => n + t.y.length, 0),
    droppedPlots: 0,
    trialsWithoutSite: [],
  };
  const Lsub = crossedLayout(sub, L.terms, L.yearAsFixed);
  try {
    const fit = averageInformationSearch(sub, Lsub, L.terms.map(() => 1), fixedZero, { signal });
    if (!fit) return null;
    // a ratio at zero in the subsample starts a little above it: the full data may well need it
    const theta = Float64Array.from(fit.evaluation.theta, (t) => Math.max(t, 0.05));
    return theta.every(Number.isFinite) ? theta : null;
  } catch (e) {
    if (signal?.aborted) throw e;
    return null;
  }
}
