// New-site prediction from the one-stage model for one contrast, on hand-made inputs. The
// plug-in interval is checked against its formula written out here (common practice: the
// two-stage plug-in interval in one-stage quantities); the bootstrap against the two-stage
// bootstrap on the same trials when the one-stage mean equals the weighted mean (the two must
// then agree to Monte Carlo error), and its fall-backs say what they did.
import { describe, expect, it } from 'vitest';
import { oneStageNewSite } from '../../../src/engine/onestage/newSitePrediction.js';
import { bootstrapPrediction } from '../../../src/engine/pooling/predictiveDistribution.js';
import { tau2ConfidenceDistribution } from '../../../src/engine/pooling/tau2ConfidenceDistribution.js';
import { tQuantile, tUpper } from '../../../src/engine/stats/distributions.js';
import { mulberry32, normalSampler } from '../../../src/engine/stats/random.js';
import type { ContrastReport, TrialContrastReport } from '../../../src/engine/onestage/types.js';

const l = Float64Array.from([-1, 0.5, 0.5]);
const sumL2 = 1.5;

function trials(seed: number, k: number, tau: number): TrialContrastReport[] {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  return Array.from({ length: k }, () => {
    const se = 0.2 + 0.5 * u();
    return { name: 'c', blup: null, raw: 1 + tau * z() + se * z(), rawSe: se, rawDf: 10 };
  });
}

function contrast(estimate: number, se: number, df: number): ContrastReport {
  return { name: 'c', estimate, se, df, lower: null, upper: null, p: null, dfMethod: 'satterthwaite', seUnadjusted: se };
}

const options = { method: 'bootstrap-tau2' as const, confidence: 0.95, threshold: 1.3, draws: 20000, seed: 11 };

describe('one-stage new-site prediction', () => {
  it('plug-in-t: estimate ± t(T - 2) sqrt(se² + sigma²_TxT sum l²), probabilities from the same t (1e-12)', () => {
    const r = oneStageNewSite(contrast(1.1, 0.08, 60), l, 0.04, trials(1, 12, 0.3), 12, { ...options, method: 'plug-in-t' });
    const sd = Math.sqrt(0.08 ** 2 + 0.04 * sumL2);
    const half = tQuantile(0.975, 10) * sd;
    expect(r.method).toBe('plug-in-t');
    expect(r.tau2).toBeCloseTo(0.04 * sumL2, 14);
    expect(Math.abs(r.lower! - (1.1 - half))).toBeLessThan(1e-12);
    expect(Math.abs(r.upper! - (1.1 + half))).toBeLessThan(1e-12);
    expect(Math.abs(r.probAboveThreshold! - tUpper((1.3 - 1.1) / sd, 10))).toBeLessThan(1e-12);
  });

  it('bootstrap-tau2 lies within 5% of the interval width of the two-stage bootstrap when the one-stage mean is the weighted mean with its Hartung–Knapp SE', () => {
    const own = trials(2, 15, 0.4);
    const y = own.map((t) => t.raw!);
    const v = own.map((t) => t.rawSe! ** 2);
    const cd = tau2ConfidenceDistribution(y, v);
    const at = cd.exact(0); // the median of the confidence distribution of tau²
    const r = oneStageNewSite(contrast(at.mean, Math.sqrt(at.hkVariance), 14), Float64Array.from([1]), at.tau2, own, 15, options);
    const two = bootstrapPrediction(y, v, { confidence: 0.95, threshold: 1.3, draws: 20000, seed: 12 });
    expect(r.method).toBe('bootstrap-tau2');
    expect(r.trialsUsed).toBe(15);
    // The one-stage draw rescales one SE by sqrt(W(tau²)/W(tau²*)) where the two-stage draw
    // recomputes the weighted mean and its Hartung–Knapp SE per draw, so they differ by a little
    // more than Monte Carlo error: 5% of the interval width.
    const width = two.upper - two.lower;
    expect(Math.abs(r.lower! - two.lower)).toBeLessThan(0.05 * width);
    expect(Math.abs(r.upper! - two.upper)).toBeLessThan(0.05 * width);
    expect(Math.abs(r.probAboveThreshold! - two.probAboveThreshold)).toBeLessThan(0.02);
  });

  it('notes when the model variance lies outside the range the trials own estimates allow', () => {
    const r = oneStageNewSite(contrast(1, 0.05, 80), l, 1e-6, trials(3, 20, 0.6), 20, options);
    expect(r.note).toMatch(/varies across sites more than the common treatment-by-trial term allows/);
    expect(r.upper! - r.lower!).toBeGreaterThan(r.plugInT.upper! - r.plugInT.lower!);
  });

  it('falls back to plug-in-t, saying why, without a treatment-by-trial term or with fewer than 3 trials of its own', () => {
    const none = oneStageNewSite(contrast(1, 0.05, 80), l, null, trials(4, 10, 0.2), 10, options);
    expect(none.method).toBe('plug-in-t');
    expect(none.note).toMatch(/no treatment-by-trial term/);
    const few = trials(5, 10, 0.2).map((t, i) => (i < 8 ? { ...t, raw: null, rawSe: null } : t));
    const r = oneStageNewSite(contrast(1, 0.05, 80), l, 0.02, few, 10, options);
    expect(r.method).toBe('plug-in-t');
    expect(r.note).toMatch(/fewer than 3 trials/);
  });

  it('is fixed by its seed', () => {
    const own = trials(6, 9, 0.3);
    const a = oneStageNewSite(contrast(1, 0.1, 30), l, 0.03, own, 9, options);
    const b = oneStageNewSite(contrast(1, 0.1, 30), l, 0.03, own, 9, options);
    expect(b).toEqual(a);
  });
});
