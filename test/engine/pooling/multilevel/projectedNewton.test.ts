// The crossed site-year model's fast refits (finite-difference projected Newton, and projected scoring on the analytic gradient, from a warm start,
// used for the bootstrap new-site prediction) against the nested Brent searches of fitCrossedYear
// (the reference, itself checked against a dense REML/ML likelihood in R, siteLevelsR.test.ts), on
// 12 simulated networks, most with a variance on the zero boundary. Tolerances: log-likelihood not
// below the searches' by more than 1e-8 relative; each tau² within 1e-5 (sampling variances
// 0.04-0.64; the refit only needs a few digits).
import { describe, expect, it } from 'vitest';
import { crossedLogLik, type CrossedGroup } from '../../../../src/engine/pooling/multilevel/crossedYearLikelihood.js';
import { fitCrossedYear } from '../../../../src/engine/pooling/multilevel/fitCrossedYear.js';
import { projectedNewton } from '../../../../src/engine/pooling/multilevel/projectedNewton.js';
import { crossedLocalRefit } from '../../../../src/engine/pooling/multilevel/crossedLocalRefit.js';
import { poolSiteLevels } from '../../../../src/engine/pooling/multilevel/poolSiteLevels.js';
import { mulberry32, normalSampler } from '../../../../src/engine/stats/random.js';

const YEARS = 6;

function network(seed: number): { groups: CrossedGroup[]; truth: [number, number, number] } {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const site = [0, 0.05, 0.2][seed % 3];
  const year = [0, 0.05, 0.2][Math.floor(seed / 3) % 3];
  const trial = [0, 0.1][seed % 2];
  const yearEffect = Array.from({ length: YEARS }, () => Math.sqrt(year) * z());
  const groups: CrossedGroup[] = [];
  for (let s = 0; s < 8 + (seed % 10); s++) {
    const a = Math.sqrt(site) * z();
    const n = 1 + Math.floor(u() * 4);
    const first = Math.floor(u() * (YEARS - n + 1));
    const yearIndex = Int32Array.from({ length: n }, (_, j) => first + j);
    const v = Float64Array.from({ length: n }, () => (0.2 + 0.6 * u()) ** 2);
    groups.push({ site: `s${s}`, trials: [...yearIndex].map(String), v, yearIndex, y: Float64Array.from(v, (vi, j) => 1 + a + yearEffect[yearIndex[j]] + Math.sqrt(trial) * z() + Math.sqrt(vi) * z()) });
  }
  return { groups, truth: [year, site, trial] };
}

describe('crossed site-year refit by projected Newton', () => {
  it('reaches the nested searches’ optimum from the generating values (REML and ML, 12 networks)', () => {
    let boundary = 0;
    for (let seed = 1; seed <= 12; seed++) {
      const kind = seed % 2 === 0 ? 'reml' : 'ml';
      const { groups, truth } = network(seed);
      const ref = fitCrossedYear(groups, YEARS, kind, 0, false);
      const fast = projectedNewton((x) => crossedLogLik(groups, YEARS, x[1], x[2], x[0], kind).logLik, truth, 0.25);
      expect(fast).not.toBeNull();
      const [year, site, trial] = fast!.x;
      expect(fast!.value).toBeGreaterThanOrEqual(ref.logLik - 1e-8 * Math.abs(ref.logLik));
      expect(Math.abs(year - ref.yearTau2)).toBeLessThanOrEqual(1e-5);
      expect(Math.abs(site - ref.siteTau2)).toBeLessThanOrEqual(1e-5);
      expect(Math.abs(trial - ref.trialTau2)).toBeLessThanOrEqual(1e-5);
      if (ref.yearTau2 === 0 || ref.siteTau2 === 0 || ref.trialTau2 === 0) boundary++;
    }
    expect(boundary).toBeGreaterThan(4);
  }, 300_000);

  it('by projected scoring (analytic gradient and average information) reaches the same optimum (REML and ML, 12 networks; same tolerances)', () => {
    for (let seed = 1; seed <= 12; seed++) {
      const kind = seed % 2 === 0 ? 'reml' : 'ml';
      const { groups, truth } = network(seed);
      const ref = fitCrossedYear(groups, YEARS, kind, 0, false);
      const fast = crossedLocalRefit(groups, YEARS, kind, [0, 1, 2], truth, 0.25);
      expect(fast).not.toBeNull();
      const [year, site, trial] = fast!;
      expect(crossedLogLik(groups, YEARS, site, trial, year, kind).logLik).toBeGreaterThanOrEqual(ref.logLik - 1e-8 * Math.abs(ref.logLik));
      expect(Math.abs(year - ref.yearTau2)).toBeLessThanOrEqual(1e-5);
      expect(Math.abs(site - ref.siteTau2)).toBeLessThanOrEqual(1e-5);
      expect(Math.abs(trial - ref.trialTau2)).toBeLessThanOrEqual(1e-5);
      // a variance held at zero is searched no further
      const held = crossedLocalRefit(groups, YEARS, kind, [1, 2], [truth[1], truth[2]], 0.25);
      expect(held![0]).toBe(0);
    }
  }, 300_000);

  it('gives the crossed pool its bootstrap new-site-in-a-new-year interval, deterministic given the seed', () => {
    const { groups } = network(8);
    const items = groups.flatMap((g) => [...g.y].map((y, j) => ({ trial: `${g.site}-${g.yearIndex[j]}`, site: g.site, year: 2018 + g.yearIndex[j], estimate: y, se: Math.sqrt(g.v[j]) })));
    const options = { method: 'reml' as const, confidence: 0.95, threshold: 1, crossedWithYear: true, crossedProfileLimit: 0, predictionDraws: 300, predictionSeed: 4 };
    const a = poolSiteLevels(items, options);
    const b = poolSiteLevels(items, options);
    expect(a.levels).toBe('site-year-and-trial');
    expect(a.newSitePrediction?.method).toBe('bootstrap-pivot');
    expect(a.newSitePrediction?.draws).toBe(300);
    expect(a.newSiteLower).toBe(b.newSiteLower);
    expect(a.newSiteLower!).toBeLessThan(a.estimate!);
    expect(a.newSiteUpper!).toBeGreaterThan(a.estimate!);
  }, 300_000);
});
