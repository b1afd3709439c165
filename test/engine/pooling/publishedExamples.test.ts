// Pooling reproduces published worked examples of random-effects meta-analysis. Each check
// names the paper, table and page; a published value is matched to its printed precision:
// |ours - published| <= half a unit in the last printed digit unless a wider tolerance is
// stated with its reason beside the check.
import { describe, expect, it } from 'vitest';
import { poolEstimates } from '../../../src/engine/pooling/poolEstimates.js';
import type { PoolingOptions } from '../../../src/engine/pooling/types.js';
import { bcgLogOddsRatios, bcgLogRiskRatios, normandMeanDifferences, teacherExpectancyItems, NORMAND } from './publishedData.js';

/** Matches a value printed with `decimals` decimals; `units` widens the tolerance in units of the last digit. */
function expectPrinted(actual: number | null | undefined, printed: number, decimals: number, units = 0.5): void {
  expect(actual).not.toBeNull();
  const tol = units * 10 ** -decimals + 1e-12;
  expect(Math.abs((actual as number) - printed), `value ${actual} vs printed ${printed} (tolerance ${tol})`).toBeLessThanOrEqual(tol);
}

const base: PoolingOptions = { tau2: 'reml', interval: 'wald', confidence: 0.95, threshold: 0 };

describe('Normand (1999, Stat Med 18:321-359): stroke-unit length of stay', () => {
  const items = normandMeanDifferences();

  it('per-trial mean differences and variances match Table VIII, p. 351 (2 decimals)', () => {
    const printedVi = [40.59, 2.05, 15.28, 150.22, 20.19, 1.22, 95.38, 8.03, 20.69];
    const printedYi = [-20, -2, -55, -71, -4, 1, 11, -10, 7];
    items.forEach((it, i) => {
      expectPrinted(it.estimate, printedYi[i], 2);
      expectPrinted(it.se * it.se, printedVi[i], 2);
    });
    expect(items.length).toBe(NORMAND.length);
  });

  it('DerSimonian–Laird: Table IX, p. 352 — estimate -14.10, 95% CI -24.45 to -3.75, tau² 218.72', () => {
    const r = poolEstimates(items, { ...base, tau2: 'dl' });
    expectPrinted(r.estimate, -14.1, 2);
    expectPrinted(r.lower, -24.45, 2);
    expectPrinted(r.upper, -3.75, 2);
    expectPrinted(r.tau2, 218.72, 2);
  });

  it('REML: Table IX, p. 352 — estimate -15.12, 95% CI -32.67 to 2.43, tau² 685.20', () => {
    const r = poolEstimates(items, base);
    expectPrinted(r.estimate, -15.12, 2);
    expectPrinted(r.lower, -32.67, 2);
    expectPrinted(r.upper, 2.43, 2);
    expectPrinted(r.tau2, 685.2, 2);
  });
});

describe('BCG vaccine trials, log relative risks (Viechtbauer 2010, J Stat Softw 36(3), section 3.4 output; values recalled from memory)', () => {
  const items = bcgLogRiskRatios();
  const r = poolEstimates(items, { ...base, moderators: ['ablat', 'year'] });

  it('REML random-effects model: tau² 0.3132, tau 0.5597, estimate -0.7145, SE 0.1798, z -3.9744, CI -1.0669 to -0.3622', () => {
    expectPrinted(r.tau2, 0.3132, 4);
    expectPrinted(r.tau, 0.5597, 4);
    expectPrinted(r.estimate, -0.7145, 4);
    expectPrinted(r.se, 0.1798, 4);
    expectPrinted((r.estimate as number) / (r.se as number), -3.9744, 4);
    expectPrinted(r.lower, -1.0669, 4);
    expectPrinted(r.upper, -0.3622, 4);
  });

  it('heterogeneity: Q(df = 12) = 152.2330; tau²-based I² = 92.22% and H² = 12.86', () => {
    expectPrinted(r.Q, 152.233, 4);
    expect(r.Qdf).toBe(12);
    expectPrinted(100 * (r.I2FromTau2 as number), 92.22, 2);
    expectPrinted(r.H2FromTau2, 12.86, 2);
    // The Q-based forms follow from the printed Q by their definitions.
    expectPrinted(r.I2, (152.233 - 12) / 152.233, 6);
    expectPrinted(r.H2, 152.233 / 12, 5);
  });

  it('Q-profile 95% interval for tau²: 0.1197 to 1.1115 (section 3.4, confint output)', () => {
    expectPrinted(r.tau2Lower, 0.1197, 4);
    expectPrinted(r.tau2Upper, 1.1115, 4);
  });

  it('meta-regression on absolute latitude and year (REML, z tests): tau² 0.1108, QE(10) = 28.3251; ablat -0.0280 (SE 0.0102), year 0.0019 (SE 0.0147)', () => {
    const m = r.metaRegression!;
    expect(m.k).toBe(13);
    expect(m.statistic).toBe('z');
    expectPrinted(m.residualTau2, 0.1108, 4);
    expectPrinted(m.residualHeterogeneity!.Q, 28.3251, 4);
    expect(m.residualHeterogeneity!.df).toBe(10);
    const ablat = m.coefficients.find((c) => c.term === 'ablat')!;
    const year = m.coefficients.find((c) => c.term === 'year')!;
    expectPrinted(ablat.estimate, -0.028, 4);
    expectPrinted(ablat.se, 0.0102, 4);
    expectPrinted(year.estimate, 0.0019, 4);
    expectPrinted(year.se, 0.0147, 4);
    // QM(df = 2) = 12.2043 as printed; relative tolerance 1e-4 because the printed fit
    // stops its REML iterations at a tau² change below 1e-5, which moves QM in the 5th digit.
    expect(m.moderatorTest!.distribution).toBe('chi-square');
    expect(m.moderatorTest!.df).toBe(2);
    expect(Math.abs(m.moderatorTest!.statistic - 12.2043) / 12.2043).toBeLessThan(1e-4);
    // Share of tau² explained, by its definition from the two printed tau² values.
    expect(Math.abs((m.tau2Explained as number) - (0.3132 - 0.1108) / 0.3132)).toBeLessThan(5e-4);
  });
});

describe('BCG vaccine trials, log odds ratios (van Houwelingen, Arends & Stijnen 2002, Stat Med 21:589-624)', () => {
  const items = bcgLogOddsRatios();

  it('ML random-effects model, p. 597: odds ratio 0.476 (95% CI 0.336 to 0.675), tau² 0.302', () => {
    const r = poolEstimates(items, { ...base, tau2: 'ml' });
    expectPrinted(Math.exp(r.estimate as number), 0.476, 3);
    expectPrinted(Math.exp(r.lower as number), 0.336, 3);
    expectPrinted(Math.exp(r.upper as number), 0.675, 3);
    expectPrinted(r.tau2, 0.302, 3);
    // p. 597 gives the upper limit 1.181 for tau² (the lower, 0.135, is from a Satterthwaite
    // approximation, not the Q-profile); the Q-profile limits 0.1302 and 1.1812 are those
    // printed on the metafor project's page reproducing this paper. Tolerance for them: one
    // unit in the 4th decimal, as that page's root finder stops at about 1e-4 (R's uniroot
    // default tolerance); the live R check in rCrossCheck.test.ts pins the roots to 1e-8.
    expectPrinted(r.tau2Upper, 1.181, 3);
    expectPrinted(r.tau2Lower, 0.1302, 4, 1);
    expectPrinted(r.tau2Upper, 1.1812, 4, 1);
  });

  it('ML meta-regression on latitude, pp. 608-609: intercept 0.371 (SE 0.106), slope -0.033 (SE 0.003), residual tau² 0.004, R² 98.7%', () => {
    const r = poolEstimates(items, { ...base, tau2: 'ml', moderators: ['ablat'] });
    const m = r.metaRegression!;
    expectPrinted(m.coefficients[0].estimate, 0.371, 3);
    expectPrinted(m.coefficients[0].se, 0.106, 3);
    expectPrinted(m.coefficients[1].estimate, -0.033, 3);
    expectPrinted(m.coefficients[1].se, 0.003, 3);
    expectPrinted(m.residualTau2, 0.004, 3);
    expectPrinted(100 * (m.tau2Explained as number), 98.7, 1);
  });
});

describe('Teacher expectancy (Raudenbush 2009, Handbook of Research Synthesis and Meta-Analysis 2nd ed., ch. 16)', () => {
  // Tolerance: one unit in the 3rd decimal (not half), because the study SEs were typed to
  // 3 decimals while the chapter computed from unrounded variances.
  const items = teacherExpectancyItems();
  const table163: Record<'fixed' | 'ml' | 'reml' | 'dl', { tau2: number; mu: number; se: number; z: number; lo: number; hi: number; seKH: number; zKH: number; loKH: number; hiKH: number }> = {
    fixed: { tau2: 0, mu: 0.06, se: 0.036, z: 1.655, lo: -0.011, hi: 0.132, seKH: 0.051, zKH: 1.173, loKH: -0.048, hiKH: 0.168 },
    ml: { tau2: 0.013, mu: 0.078, se: 0.047, z: 1.637, lo: -0.015, hi: 0.171, seKH: 0.059, zKH: 1.311, loKH: -0.047, hiKH: 0.202 },
    reml: { tau2: 0.019, mu: 0.084, se: 0.052, z: 1.621, lo: -0.018, hi: 0.185, seKH: 0.062, zKH: 1.359, loKH: -0.046, hiKH: 0.213 },
    dl: { tau2: 0.026, mu: 0.089, se: 0.056, z: 1.601, lo: -0.02, hi: 0.199, seKH: 0.064, zKH: 1.405, loKH: -0.044, hiKH: 0.223 },
  };
  for (const [method, t] of Object.entries(table163) as [keyof typeof table163, (typeof table163)['ml']][]) {
    it(`${method}: Table 16.3, p. 309 — conventional and Knapp–Hartung (HKSJ) rows`, () => {
      const w = poolEstimates(items, { ...base, tau2: method });
      expectPrinted(w.tau2, t.tau2, 3, 1);
      expectPrinted(w.estimate, t.mu, 3, 1);
      expectPrinted(w.se, t.se, 3, 1);
      expectPrinted((w.estimate as number) / (w.se as number), t.z, 3, 2);
      expectPrinted(w.lower, t.lo, 3, 1);
      expectPrinted(w.upper, t.hi, 3, 1);
      const h = poolEstimates(items, { ...base, tau2: method, interval: 'hksj' });
      expect(h.df).toBe(18);
      expectPrinted(h.se, t.seKH, 3, 1);
      expectPrinted((h.estimate as number) / (h.se as number), t.zKH, 3, 2);
      expectPrinted(h.lower, t.loKH, 3, 1);
      expectPrinted(h.upper, t.hiKH, 3, 1);
    });
  }

  it('Table 16.2, pp. 301-302: Q = 35.83 on 18 df; mixed-effects model on weeks of contact (capped at 3): tau² 0, coefficients 0.407 and -0.157, z 4.68 and -4.39, QE 16.57', () => {
    const r = poolEstimates(items, { ...base, moderators: ['weeksCapped'] });
    expectPrinted(r.Q, 35.83, 2, 1);
    const m = r.metaRegression!;
    expectPrinted(m.residualTau2, 0, 3);
    expectPrinted(m.coefficients[0].estimate, 0.407, 3, 1);
    expectPrinted(m.coefficients[1].estimate, -0.157, 3, 1);
    expectPrinted(m.coefficients[0].statistic, 4.68, 2, 1);
    expectPrinted(m.coefficients[1].statistic, -4.39, 2, 1);
    expectPrinted(m.residualHeterogeneity!.Q, 16.57, 2, 1);
  });
});
