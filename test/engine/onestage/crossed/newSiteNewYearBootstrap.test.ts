// The crossed one-stage model's new-site-in-a-new-year prediction on hand-made inputs (trials' own
// estimates of a contrast drawn here from the two-stage crossed model). Checks:
// - fixed by its seed (bit for bit), another seed another interval;
// - limiting case 1, no treatment-by-environment term in the model: a new site's contrast is then
//   the mean itself and each refit has no variance to estimate, so the studentised prediction
//   error (mu - mu*) / se* is exactly N(0, 1) (mu* normal around mu with the known variance); the
//   interval must be estimate ± z(0.975) se — the normal interval for the mean — and P(effect > 0)
//   = Phi(estimate / se), to Monte Carlo error (4 SEs of a sample quantile / proportion);
// - limiting case 2, the one-stage numbers equal to the two-stage crossed pool's own fit (mean, its
//   SE, site, year and trial tau²) on the same own estimates: the interval and probabilities must
//   be those of the two-stage pool's bootstrap-pivot (checked live against base R in
//   test/engine/pooling/multilevel/) draw for draw, to 1e-12 relative;
// - progress once the work has taken a second, and cancel through the signal;
// - plug-in-t: its formula written out here (1e-12), and the fall-back to it, saying why.
import { describe, expect, it } from 'vitest';
import { newSiteNewYearPrediction, type OwnTrialEstimate } from '../../../../src/engine/onestage/crossed/newSiteNewYearBootstrap.js';
import { poolSiteLevels } from '../../../../src/engine/pooling/multilevel/poolSiteLevels.js';
import { normalCdf, normalQuantile, tQuantile, tUpper } from '../../../../src/engine/stats/distributions.js';
import { mulberry32, normalSampler } from '../../../../src/engine/stats/random.js';

function ownEstimates(seed: number, sites: number, years: number): OwnTrialEstimate[] {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const yearEffect = Array.from({ length: years }, () => 0.3 * z());
  const out: OwnTrialEstimate[] = [];
  for (let s = 0; s < sites; s++) {
    const a = 0.4 * z();
    for (let y = 0; y < years; y++) {
      if (u() < 0.25) continue;
      const se = 0.2 + 0.4 * u();
      out.push({ trial: `S${s}-${2018 + y}`, site: `S${s}`, year: 2018 + y, estimate: 1 + a + yearEffect[y] + 0.3 * z() + se * z(), se });
    }
  }
  return out;
}

const own = ownEstimates(5, 10, 5);
const parts = { site: 0.12, year: 0.05, siteYear: 0.08 };
const options = { method: 'bootstrap-tau2' as const, confidence: 0.95, threshold: 0.8, draws: 400, seed: 17 };

describe('new site in a new year (crossed one-stage)', () => {
  it('is fixed by its seed and reports the method that made it', () => {
    const a = newSiteNewYearPrediction(1.1, 0.15, parts, 10, own, options);
    const b = newSiteNewYearPrediction(1.1, 0.15, parts, 10, own, options);
    expect(a.method).toBe('bootstrap-pivot');
    expect(a.seed).toBe(17);
    expect(a.trialsUsed).toBe(own.length);
    expect(a.sitesUsed).toBe(10);
    expect(b.lower).toBe(a.lower);
    expect(b.upper).toBe(a.upper);
    expect(b.probPositive).toBe(a.probPositive);
    expect(b.probAboveThreshold).toBe(a.probAboveThreshold);
    const c = newSiteNewYearPrediction(1.1, 0.15, parts, 10, own, { ...options, seed: 18 });
    expect(c.lower).not.toBe(a.lower);
  }, 60_000);

  it('without a treatment-by-environment term: estimate ± z se and Phi(estimate / se), to Monte Carlo error', () => {
    const draws = 4000;
    const estimate = 0.3;
    const se = 0.2;
    const r = newSiteNewYearPrediction(estimate, se, { site: null, year: null, siteYear: null }, 10, own, { ...options, draws });
    expect(r.method).toBe('bootstrap-pivot');
    const z = normalQuantile(0.975);
    // SE of the sample 2.5% quantile of N(0, 1): sqrt(p (1 - p) / B) / phi(z)
    const quantileSe = Math.sqrt((0.025 * 0.975) / draws) / (Math.exp(-(z * z) / 2) / Math.sqrt(2 * Math.PI));
    expect(Math.abs(r.lower - (estimate - z * se))).toBeLessThan(4 * quantileSe * se);
    expect(Math.abs(r.upper - (estimate + z * se))).toBeLessThan(4 * quantileSe * se);
    const p = normalCdf(estimate / se);
    expect(Math.abs(r.probPositive - p)).toBeLessThan(4 * Math.sqrt((p * (1 - p)) / draws));
    // the plug-in interval is on t(sites - 2) instead: wider than the limit
    expect(r.plugInT.upper - r.plugInT.lower).toBeCloseTo(2 * tQuantile(0.975, 8) * se, 12);
  }, 60_000);

  it('fed the two-stage crossed fit, gives the two-stage pool\'s bootstrap-pivot interval draw for draw (1e-12)', () => {
    const items = own.map((t) => ({ trial: t.trial, site: t.site, year: t.year, estimate: t.estimate, se: t.se }));
    const pool = poolSiteLevels(items, { method: 'reml', confidence: 0.95, threshold: 0.8, leaveOneSiteOut: false, crossedWithYear: true, crossedProfileLimit: 0, predictionDraws: 300, predictionSeed: 23 });
    const two = pool.newSitePrediction!;
    expect(two.method).toBe('bootstrap-pivot');
    const r = newSiteNewYearPrediction(pool.estimate as number, pool.se as number, { site: pool.siteTau2 as number, year: pool.yearTau2 as number, siteYear: pool.trialTau2 as number }, 10, own, { ...options, draws: 300, seed: 23 });
    const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(1, Math.abs(b));
    expect(rel(r.lower, two.lower as number)).toBeLessThan(1e-12);
    expect(rel(r.upper, two.upper as number)).toBeLessThan(1e-12);
    expect(r.probPositive).toBe(two.probPositive);
    expect(r.probAboveThreshold).toBe(two.probAboveThreshold);
  }, 120_000);

  it('reports progress once past a second and stops when cancelled', () => {
    const controller = new AbortController();
    const seen: number[] = [];
    const run = () =>
      newSiteNewYearPrediction(1.1, 0.15, parts, 10, own, {
        ...options,
        draws: 100_000,
        signal: controller.signal,
        onProgress: (f) => {
          seen.push(f);
          controller.abort(new Error('cancelled by the test'));
        },
      });
    const began = Date.now();
    expect(run).toThrow(/cancelled by the test/);
    expect(seen.length).toBe(1);
    expect(seen[0]).toBeGreaterThan(0);
    expect(seen[0]).toBeLessThan(1);
    expect(Date.now() - began).toBeGreaterThanOrEqual(1000);
  }, 60_000);

  it('plug-in-t: estimate ± t(sites - 2) sqrt(se² + the three parts), probabilities on the same t (1e-12)', () => {
    const r = newSiteNewYearPrediction(1.1, 0.15, parts, 10, own, { ...options, method: 'plug-in-t' });
    const sd = Math.sqrt(0.15 ** 2 + 0.12 + 0.05 + 0.08);
    const half = tQuantile(0.975, 8) * sd;
    expect(r.method).toBe('plug-in-t');
    expect(r.draws).toBeNull();
    expect(Math.abs(r.lower - (1.1 - half))).toBeLessThan(1e-12);
    expect(Math.abs(r.upper - (1.1 + half))).toBeLessThan(1e-12);
    expect(Math.abs(r.probAboveThreshold - tUpper((0.8 - 1.1) / sd, 8))).toBeLessThan(1e-12);
    expect(r.plugInT).toEqual({ lower: r.lower, upper: r.upper, probPositive: r.probPositive, probAboveThreshold: r.probAboveThreshold });
  });

  it('falls back to plug-in-t, saying why, with own estimates at fewer than three sites or from one year only', () => {
    const two = own.filter((t) => t.site === 'S0' || t.site === 'S1');
    const few = newSiteNewYearPrediction(1.1, 0.15, parts, 10, two, options);
    expect(few.method).toBe('plug-in-t');
    expect(few.note).toMatch(/three sites or more \(2 here\)/);
    const oneYear = own.filter((t) => t.year === 2019);
    const r = newSiteNewYearPrediction(1.1, 0.15, parts, 10, oneYear, options);
    expect(r.method).toBe('plug-in-t');
    expect(r.note).toMatch(/two years or more/);
  });
});
