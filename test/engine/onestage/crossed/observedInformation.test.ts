// The analytic observed information of the crossed model's REML criterion (in log variance ratios,
// residual variance fixed) against central differences of the analytic gradient, and the analytic
// derivatives of the contrast variances against central differences of those variances (common
// practice: a derivative checked by differencing what it differentiates; the gradient itself is
// checked against the criterion in crossedDerivatives.test.ts). Central differences with step 1e-4
// in log gamma; tolerance 1e-6 of the largest entry (of the Hessian; of each contrast's gradient,
// whose entries near zero are rounding in the differences). Points: the REML optimum, an interior
// point away from it, and a point with two ratios at exactly zero (the first term, shared or not,
// and the last, within-trial; held there: the block of the others). The df against lmerTest stay in fitCrossed.test.ts.
import { describe, expect, it } from 'vitest';
import { crossedData, type CrossedData } from '../../../../src/engine/onestage/crossed/crossedData.js';
import { crossedLayout, type CrossedLayout } from '../../../../src/engine/onestage/crossed/crossedLayout.js';
import { evaluateCrossed } from '../../../../src/engine/onestage/crossed/crossedLikelihood.js';
import { crossedDerivatives } from '../../../../src/engine/onestage/crossed/crossedDerivatives.js';
import { observedInformation } from '../../../../src/engine/onestage/crossed/observedInformation.js';
import { optimiseCrossed } from '../../../../src/engine/onestage/crossed/optimiseCrossed.js';
import type { CrossedTerm } from '../../../../src/engine/onestage/crossed/terms.js';
import { simulateCrossed } from './support/simulateCrossed.js';

const ALL: CrossedTerm[] = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];
const SETTINGS = [
  { seed: 11, sites: 14, years: 5, terms: ALL, yearAsFixed: false },
  { seed: 23, sites: 10, years: 4, terms: ['site', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'] as CrossedTerm[], yearAsFixed: true },
  { seed: 37, sites: 16, years: 3, terms: ['year', 'trial', 'treatment-by-site', 'treatment-by-trial'] as CrossedTerm[], yearAsFixed: false },
  { seed: 5, sites: 12, years: 4, terms: ['year', 'trial', 'block', 'treatment-by-trial'] as CrossedTerm[], yearAsFixed: false },
];

function setup(s: (typeof SETTINGS)[number]): { d: CrossedData; L: CrossedLayout } {
  const sim = simulateCrossed({ seed: s.seed, sites: s.sites, years: s.years, runProbability: 0.7, missing: 0.06, sd: { site: 1.2, year: 0.8 } });
  const d = crossedData(sim.network, s.terms, s.yearAsFixed);
  return { d, L: crossedLayout(d, s.terms, s.yearAsFixed) };
}

/** dF/dphi_k = gamma_k (tr(P V_k) - |Z_k'Py|² / sigma²) at a fixed sigma². */
function phiGradient(d: CrossedData, L: CrossedLayout, gamma: readonly number[], sigma2: number): number[] {
  const der = crossedDerivatives(d, L, evaluateCrossed(d, L, gamma.map(Math.sqrt))!, false);
  return gamma.map((g, k) => g * (der.trace[k] - der.quadratic[k] / sigma2));
}

/** l'(X'H^-1X)^-1 l at gamma. */
function contrastVariance(d: CrossedData, L: CrossedLayout, gamma: readonly number[], l: Float64Array): number {
  const ev = evaluateCrossed(d, L, gamma.map(Math.sqrt))!;
  let v = 0;
  for (let i = 0; i < L.p; i++) for (let j = 0; j < L.p; j++) v += l[i] * ev.xhxInverse[i * L.p + j] * l[j];
  return v;
}

describe('crossed REML observed information', () => {
  for (const s of SETTINGS) {
    const { d, L } = setup(s);
    const nT = L.terms.length;
    const optimum = Array.from(optimiseCrossed(d, L, L.terms.map(() => 1)).evaluation.theta, (t) => t * t);
    const points: [string, number[]][] = [
      ['the optimum', optimum],
      ['an interior point', L.terms.map((_, k) => 0.2 + 0.15 * k)],
      ['ratios at zero', L.terms.map((_, k) => (k === 0 || k === nT - 1 ? 0 : 0.3 + 0.1 * k))],
    ];
    // the treated-vs-first contrasts and one treatment mean
    const ls = [...d.treatments.slice(1).map((_, j) => Float64Array.from({ length: L.p }, (_, i) => (i === j + 1 ? 1 : i === 0 ? -1 : 0))), Float64Array.from({ length: L.p }, (_, i) => (i === 0 ? 1 : 0))];
    for (const [label, gamma] of points) {
      const free = L.terms.map((_, k) => k).filter((k) => gamma[k] > 0);
      const ev = evaluateCrossed(d, L, gamma.map(Math.sqrt))!;
      const info = observedInformation(d, L, ev, crossedDerivatives(d, L, ev), ls);
      const h = 1e-4;
      const shifted = (l: number, sign: number) => gamma.map((g, k) => (k === l ? g * Math.exp(sign * h) : g));
      it(`Hessian equals central differences of the gradient at ${label} (${s.terms.join(', ')})`, () => {
        const fd = free.map((l) => {
          const up = phiGradient(d, L, shifted(l, 1), ev.sigma2);
          const down = phiGradient(d, L, shifted(l, -1), ev.sigma2);
          return up.map((u, k) => (u - down[k]) / (2 * h));
        });
        const scale = Math.max(...free.flatMap((_, j) => free.map((k) => Math.abs(fd[j][k]))));
        free.forEach((l, j) =>
          free.forEach((k) => expect(Math.abs(info.hessian[k * nT + l] - fd[j][k]) / scale, `${L.terms[k]} x ${L.terms[l]}`).toBeLessThan(1e-6)),
        );
      });
      it(`contrast variance derivatives equal central differences at ${label} (${s.terms.join(', ')})`, () => {
        ls.forEach((l, c) => {
          const fd = free.map((k) => (contrastVariance(d, L, shifted(k, 1), l) - contrastVariance(d, L, shifted(k, -1), l)) / (2 * h));
          const scale = Math.max(...fd.map(Math.abs));
          free.forEach((k, j) => expect(Math.abs(info.contrastGradient[c][k] - fd[j]) / scale, `contrast ${c}, ${L.terms[k]}`).toBeLessThan(1e-6));
        });
      });
    }
  }
});
