// The plots of a network arranged for the crossed fit: per trial its responses, treatment and
// block of each plot, and the indices of its site and year. Refuses, in the user's terms, a term
// the network cannot tell apart from another.
import type { NetworkInput } from '../../types.js';
import type { CrossedTerm } from './terms.js';

export class CrossedDataError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'CrossedDataError';
  }
}

export interface CrossedTrial {
  readonly trial: string;
  readonly site: number;
  readonly year: number;
  readonly y: Float64Array;
  /** Treatment index of each plot (into CrossedData.treatments). */
  readonly treatment: Int32Array;
  /** Block index of each plot within the trial, -1 without a block. */
  readonly block: Int32Array;
  readonly nBlocks: number;
  /** Same layout, same key: trials with one key share their within-trial covariance. */
  readonly layoutKey: string;
}

export interface CrossedData {
  readonly treatments: readonly string[];
  readonly sites: readonly string[];
  readonly years: readonly number[];
  readonly trials: readonly CrossedTrial[];
  readonly nObservations: number;
  readonly droppedPlots: number;
  /** Trials without a site, each counted as a site of its own. */
  readonly trialsWithoutSite: readonly string[];
}

export function crossedData(network: NetworkInput, random: readonly CrossedTerm[], yearAsFixed: boolean): CrossedData {
  const observed = new Set<string>();
  for (const t of network.trials) for (const p of t.plots) if (p.value !== null && Number.isFinite(p.value) && !p.excluded) observed.add(p.treatment);
  const treatments = network.treatments.map((t) => t.code).filter((c) => observed.has(c));
  const treatmentIndex = new Map(treatments.map((c, j) => [c, j]));
  const usesYear = yearAsFixed || random.includes('year') || random.includes('treatment-by-year');
  const noYear = network.trials.filter((t) => t.year === undefined || t.year === null || !Number.isFinite(t.year)).map((t) => t.trial);
  if (usesYear && noYear.length > 0)
    throw new CrossedDataError(`${yearAsFixed ? 'fixed years' : 'a year term'} needs each trial's year (columns.year with --data); no year for ${noYear.length} trial(s): ${noYear.slice(0, 10).join(', ')}`);

  const siteNames: string[] = [];
  const siteIndex = new Map<string, number>();
  const yearValues = [...new Set(network.trials.map((t) => t.year ?? 0))].sort((a, b) => a - b);
  const yearIndex = new Map(yearValues.map((y, k) => [y, k]));
  const trials: CrossedTrial[] = [];
  const withoutSite: string[] = [];
  let nObservations = 0;
  let droppedPlots = 0;
  for (const t of network.trials) {
    const rows = t.plots.filter((p) => p.value !== null && Number.isFinite(p.value) && !p.excluded && treatmentIndex.has(p.treatment));
    droppedPlots += t.plots.length - rows.length;
    if (rows.length === 0) continue;
    const siteName = t.site && t.site.trim() !== '' ? t.site : t.trial;
    if (!t.site || t.site.trim() === '') withoutSite.push(t.trial);
    if (!siteIndex.has(siteName)) {
      siteIndex.set(siteName, siteNames.length);
      siteNames.push(siteName);
    }
    const blockIndex = new Map<string, number>();
    const block = Int32Array.from(rows, (p) => {
      if (p.block === null || p.block === '') return -1;
      if (!blockIndex.has(p.block)) blockIndex.set(p.block, blockIndex.size);
      return blockIndex.get(p.block)!;
    });
    const treatment = Int32Array.from(rows, (p) => treatmentIndex.get(p.treatment)!);
    trials.push({
      trial: t.trial,
      site: siteIndex.get(siteName)!,
      year: yearIndex.get(t.year ?? 0)!,
      y: Float64Array.from(rows, (p) => p.value as number),
      treatment,
      block,
      nBlocks: blockIndex.size,
      layoutKey: `${Array.from(treatment).join(',')}|${Array.from(block).join(',')}`,
    });
    nObservations += rows.length;
  }
  const usedYears = [...new Set(trials.map((t) => t.year))].sort((a, b) => a - b);
  // re-index years to those with data
  const remap = new Map(usedYears.map((y, k) => [y, k]));
  const finalTrials = trials.map((t) => ({ ...t, year: remap.get(t.year)! }));
  const data: CrossedData = { treatments, sites: siteNames, years: usedYears.map((k) => yearValues[k]), trials: finalTrials, nObservations, droppedPlots, trialsWithoutSite: withoutSite };
  checkIdentifiable(data, random, yearAsFixed);
  return data;
}

/** A term the data cannot tell apart from another (or from nothing) is refused, saying why. */
function checkIdentifiable(d: CrossedData, random: readonly CrossedTerm[], yearAsFixed: boolean): void {
  const has = (t: CrossedTerm) => random.includes(t);
  const trialsPerSite = new Map<number, Set<number>>();
  for (const t of d.trials) {
    const s = trialsPerSite.get(t.site) ?? new Set<number>();
    s.add(t.year);
    trialsPerSite.set(t.site, s);
  }
  const countPerSite = new Map<number, number>();
  for (const t of d.trials) countPerSite.set(t.site, (countPerSite.get(t.site) ?? 0) + 1);
  const repeated = [...countPerSite.values()].some((n) => n >= 2);
  if (yearAsFixed && (has('year'))) throw new CrossedDataError('oneStage: "year" is named as a random term and oneStage.yearAsFixed is true; choose one of the two');
  if (d.years.length < 2) {
    if (has('year') || has('treatment-by-year')) throw new CrossedDataError(`oneStage: the term ${has('year') ? '"year"' : '"treatment-by-year"'} needs trials in at least two years; every trial here is from ${d.years[0]}`);
    if (yearAsFixed) throw new CrossedDataError(`oneStage.yearAsFixed needs trials in at least two years; every trial here is from ${d.years[0]}`);
  }
  if (d.sites.length < 2 && (has('site') || has('treatment-by-site'))) throw new CrossedDataError(`oneStage: the term ${has('site') ? '"site"' : '"treatment-by-site"'} needs trials at two sites or more; all trials are at ${d.sites[0]}`);
  if (!repeated) {
    if (has('treatment-by-site')) throw new CrossedDataError('oneStage: "treatment-by-site" cannot be told apart from the site-year response: no site has more than one trial (set columns.site, or leave the term out)');
    if (has('site') && has('trial')) throw new CrossedDataError('oneStage: "site" and "trial" cannot both be fitted: every site has one trial, so a site and its trial are the same environment (leave one of the two out)');
  }
  // a site-year with two trials is still a trial; but if every trial is alone in its site-year and every
  // site is alone... handled above. Year terms against trial: a year with one trial only makes year
  // and trial the same there, which is fine as long as some year has two trials.
  const trialsPerYear = new Map<number, number>();
  for (const t of d.trials) trialsPerYear.set(t.year, (trialsPerYear.get(t.year) ?? 0) + 1);
  if ([...trialsPerYear.values()].every((n) => n < 2)) {
    if (has('year') && has('trial')) throw new CrossedDataError('oneStage: "year" and "trial" cannot both be fitted: every year has one trial');
    if (has('treatment-by-year') && has('treatment-by-trial')) throw new CrossedDataError('oneStage: "treatment-by-year" cannot be told apart from "treatment-by-trial": every year has one trial');
  }
  if (d.treatments.length < 2 && (has('treatment-by-site') || has('treatment-by-year') || has('treatment-by-trial'))) throw new CrossedDataError('oneStage: a treatment-by term needs at least two treatments with data');
}

export { contrastVector } from '../contrastVector.js';
