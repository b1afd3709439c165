// Start values for the crossed AI-REML search from moments of the data: each trial's additive
// treatment + block fit gives a residual variance, block effects, treatment effects and a trial
// mean; the trial means and the treatment effects (less the network's treatment means) are then
// split into year, site and what is left (the trial part) by year means and, within years, site
// means — the ANOVA-type estimates of a crossed layout with the averaging noise taken out. Only a
// start: the search finds the REML optimum from any start; a start near it saves Newton steps
// from the default of every ratio 1. Returned as relative standard deviations theta_k.
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';

/** Ratios below this (variance over residual variance) start here instead: the search then moves them to zero or up. */
const FLOOR = 0.02;

interface Split {
  readonly year: number;
  readonly site: number;
  readonly rest: number;
}

/** Variance of z between years, between sites within years, and left over (all >= 0). */
function splitCrossed(z: readonly number[], site: readonly number[], year: readonly number[], nSites: number, nYears: number): Split | null {
  const n = z.length;
  if (n < 3) return null;
  const yearSum = new Float64Array(nYears);
  const yearN = new Float64Array(nYears);
  for (let i = 0; i < n; i++) {
    yearSum[year[i]] += z[i];
    yearN[year[i]]++;
  }
  const yearMean = Array.from(yearSum, (s, y) => (yearN[y] > 0 ? s / yearN[y] : 0));
  const w = z.map((v, i) => v - yearMean[year[i]]);
  const siteSum = new Float64Array(nSites);
  const siteN = new Float64Array(nSites);
  for (let i = 0; i < n; i++) {
    siteSum[site[i]] += w[i];
    siteN[site[i]]++;
  }
  const siteMean = Array.from(siteSum, (s, k) => (siteN[k] > 0 ? s / siteN[k] : 0));
  // left over: within-site spread of w, each site's sum of squares on n_s - 1 df
  let ss = 0;
  let df = 0;
  for (let i = 0; i < n; i++) if (siteN[site[i]] > 1) ss += (w[i] - siteMean[site[i]]) ** 2;
  for (const c of siteN) if (c > 1) df += c - 1;
  const rest = df > 0 ? ss / df : 0;
  // sites: spread of site means less the leftover's share 1/n_s
  let siteSs = 0;
  let siteNoise = 0;
  let sites = 0;
  for (let k = 0; k < nSites; k++)
    if (siteN[k] > 0) {
      siteSs += siteMean[k] ** 2;
      siteNoise += rest / siteN[k];
      sites++;
    }
  const siteVar = sites > 1 ? Math.max(0, (siteSs - siteNoise) / (sites - 1)) : 0;
  // years: spread of year means less the sites' and leftover's share
  const used = yearMean.filter((_, y) => yearN[y] > 0);
  let yearVar = 0;
  if (used.length > 1) {
    const grand = used.reduce((a, b) => a + b, 0) / used.length;
    let s = 0;
    let noise = 0;
    for (let y = 0; y < nYears; y++) if (yearN[y] > 0) {
      s += (yearMean[y] - grand) ** 2;
      noise += (siteVar + rest) / yearN[y];
    }
    yearVar = Math.max(0, (s - noise * (used.length - 1) / used.length) / (used.length - 1));
  }
  return { year: yearVar, site: siteVar, rest };
}

export function momentStart(d: CrossedData, L: CrossedLayout): Float64Array {
  const nT = L.terms.length;
  const t = L.t;
  let residualSs = 0;
  let residualDf = 0;
  let blockSum = 0;
  let blockTrials = 0;
  const trialMean: number[] = [];
  const trialSite: number[] = [];
  const trialYear: number[] = [];
  const effects: Float64Array[] = [];
  const present: Uint8Array[] = [];
  let perBlock = 0;
  let blocksPerTrial = 0;
  for (const tr of d.trials) {
    const n = tr.y.length;
    const nb = Math.max(1, tr.nBlocks);
    const blockOf = (i: number) => Math.max(0, tr.block[i]);
    let mean = 0;
    for (let i = 0; i < n; i++) mean += tr.y[i];
    mean /= n;
    const tau = new Float64Array(t);
    const beta = new Float64Array(nb);
    const tCount = new Float64Array(t);
    const bCount = new Float64Array(nb);
    for (let i = 0; i < n; i++) {
      tCount[tr.treatment[i]]++;
      bCount[blockOf(i)]++;
    }
    // the additive fit by alternating treatment and block means (exact in a few sweeps when complete)
    for (let sweep = 0; sweep < 6; sweep++) {
      tau.fill(0);
      for (let i = 0; i < n; i++) tau[tr.treatment[i]] += tr.y[i] - mean - beta[blockOf(i)];
      for (let j = 0; j < t; j++) if (tCount[j] > 0) tau[j] /= tCount[j];
      beta.fill(0);
      for (let i = 0; i < n; i++) beta[blockOf(i)] += tr.y[i] - mean - tau[tr.treatment[i]];
      for (let b = 0; b < nb; b++) if (bCount[b] > 0) beta[b] /= bCount[b];
    }
    const nTrt = tCount.filter((c) => c > 0).length;
    const nBlk = bCount.filter((c) => c > 0).length;
    for (let i = 0; i < n; i++) residualSs += (tr.y[i] - mean - tau[tr.treatment[i]] - beta[blockOf(i)]) ** 2;
    residualDf += Math.max(0, n - nTrt - nBlk + 1);
    if (nBlk > 1) {
      let s = 0;
      for (let b = 0; b < nb; b++) if (bCount[b] > 0) s += beta[b] ** 2;
      blockSum += s / (nBlk - 1);
      blockTrials++;
    }
    perBlock += n / nBlk;
    blocksPerTrial += nBlk;
    // treatment effects centred on the trial's own treatments
    let tauMean = 0;
    for (let j = 0; j < t; j++) if (tCount[j] > 0) tauMean += tau[j] / nTrt;
    effects.push(tau.map((v, j) => (tCount[j] > 0 ? v - tauMean : 0)));
    present.push(Uint8Array.from(tCount, (c) => (c > 0 ? 1 : 0)));
    trialMean.push(mean);
    trialSite.push(tr.site);
    trialYear.push(tr.year);
  }
  const nTrials = d.trials.length;
  const sigma2 = residualDf > 0 ? residualSs / residualDf : 1;
  if (!(sigma2 > 0) || nTrials === 0) return new Float64Array(nT).fill(1);
  perBlock /= nTrials;
  blocksPerTrial /= nTrials;
  const block = blockTrials > 0 ? Math.max(0, blockSum / blockTrials - sigma2 / perBlock) : 0;
  const means = splitCrossed(trialMean, trialSite, trialYear, L.nSites, L.nYears);
  // treatment effects less the network's mean effect of each treatment, split treatment by treatment
  let tSite = 0;
  let tYear = 0;
  let tRest = 0;
  let tUsed = 0;
  for (let j = 0; j < t; j++) {
    const rows = effects.map((_, i) => i).filter((i) => present[i][j]);
    if (rows.length < 3) continue;
    const avg = rows.reduce((s, i) => s + effects[i][j], 0) / rows.length;
    const s = splitCrossed(rows.map((i) => effects[i][j] - avg), rows.map((i) => trialSite[i]), rows.map((i) => trialYear[i]), L.nSites, L.nYears);
    if (!s) continue;
    tSite += s.site;
    tYear += s.year;
    tRest += s.rest;
    tUsed++;
  }
  // centring within a trial scales each treatment-level variance by (t - 1) / t
  const centred = t > 1 ? t / (t - 1) : 1;
  const variance: Record<string, number> = {
    block,
    site: means?.site ?? 0,
    year: means?.year ?? 0,
    trial: means ? Math.max(0, means.rest - block / blocksPerTrial - sigma2 / (perBlock * blocksPerTrial)) : 0,
    'treatment-by-site': tUsed > 0 ? (centred * tSite) / tUsed : 0,
    'treatment-by-year': tUsed > 0 ? (centred * tYear) / tUsed : 0,
    'treatment-by-trial': tUsed > 0 ? Math.max(0, (centred * tRest) / tUsed - sigma2 / blocksPerTrial) : 0,
  };
  return Float64Array.from(L.terms, (term) => {
    const ratio = variance[term] / sigma2;
    return Math.sqrt(Number.isFinite(ratio) ? Math.max(FLOOR, ratio) : 1);
  });
}
