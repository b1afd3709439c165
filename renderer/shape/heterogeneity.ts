// Heterogeneity and pooled results in plain words, beside the numbers.
import { formatProbability } from './format.js';

export interface PooledNumbers {
  readonly estimate: number | null;
  readonly lower: number | null;
  readonly upper: number | null;
  readonly p: number | null;
  readonly tau2: number | null;
  readonly I2: number | null;
  readonly Qp: number | null;
  readonly k: number;
  readonly predictionLower: number | null;
  readonly predictionUpper: number | null;
  readonly probPositive: number | null;
  readonly probAboveThreshold: number | null;
}

function pct(v: number): string {
  return `${Math.round(v * 100)}%`;
}

/** How much of the spread between trials is real (I²) — the usual reading bands (Higgins et al. 2003: low 25%, moderate 50%, high 75%). */
export function heterogeneityWords(p: PooledNumbers): string {
  if (p.I2 === null || p.tau2 === null) return 'Heterogeneity could not be estimated from these trials.';
  const band = p.I2 < 0.25 ? 'little' : p.I2 < 0.5 ? 'some' : p.I2 < 0.75 ? 'substantial' : 'considerable';
  const test = p.Qp === null ? '' : p.Qp < 0.05 ? ' The Q test says the trials differ by more than chance (p < 0.05).' : ' The Q test does not show differences beyond chance, which with few trials is weak evidence of consistency.';
  return `About ${pct(p.I2)} of the spread among the ${p.k} trial estimates reflects real differences between site-years rather than sampling error: ${band} heterogeneity. tau² is the variance of the true effect across site-years.${test}`;
}

export function pooledWords(p: PooledNumbers, unit: string, threshold: number, fmt: (v: number | null) => string): string {
  if (p.estimate === null) return 'No pooled estimate: too few trials have this contrast.';
  const sign = p.estimate >= 0 ? 'gain' : 'loss';
  const ci = `${fmt(p.lower)} to ${fmt(p.upper)}`;
  const pred = p.predictionLower === null ? '' : ` At a new site-year like these, the effect is expected between ${fmt(p.predictionLower)} and ${fmt(p.predictionUpper)} ${unit}.`;
  const pos = p.probPositive === null ? '' : ` The chance of a positive response at a new site is ${formatProbability(p.probPositive)}`;
  const prof = p.probAboveThreshold === null ? '' : `, and of a response above the break-even ${fmt(threshold)} ${unit}, ${formatProbability(p.probAboveThreshold)}.`;
  return `On average over the ${p.k} trials the contrast shows a ${sign} of ${fmt(Math.abs(p.estimate))} ${unit} (interval ${ci}).${pred}${pos}${prof}`;
}
