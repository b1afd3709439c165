// Transformations: back-transformed means and intervals and log-scale ratios against values
// derived by hand in this file (plain arithmetic on small completely randomised trials whose
// group means and residual variance are obvious), not through the engine's code.
import { describe, it, expect } from 'vitest';
import { analyzeTrial } from '../../../src/engine/trial/analyzeTrial.js';
import { TrialInputError } from '../../../src/engine/trial/errors.js';
import type { EstimableContrast, TrialAnalysisOptions } from '../../../src/engine/trial/types.js';
import type { ResolvedContrast } from '../../../src/engine/contrasts/resolve.js';
import type { TrialInput, TreatmentInfo } from '../../../src/engine/types.js';
import { expectClose } from './close.js';

const treatments: TreatmentInfo[] = [{ code: 'A', levels: {} }, { code: 'B', levels: {} }];
const bVsA: ResolvedContrast = { name: 'B_vs_A', kind: 'coefficients', coefficients: { A: -1, B: 1 }, divisor: 1, meaning: 'B - A' };

function twoGroups(a: number[], b: number[]): TrialInput {
  const plots = [...a.map((v) => ['A', v] as const), ...b.map((v) => ['B', v] as const)].map(([t, v], i) => ({ plotId: i + 1, treatment: t, block: null, row: null, col: null, value: v }));
  return { trial: 'tx', design: 'completely-randomised', plots };
}

/** t(0.975, 4) by bisection on the closed-form cdf of t with 4 df: 1/2 + (3/4)(u - u³/3), u = t / sqrt(t² + 4). */
function t975df4(): number {
  const cdf = (t: number): number => {
    const u = t / Math.sqrt(t * t + 4);
    return 0.5 + 0.75 * (u - (u * u * u) / 3);
  };
  let lo = 0;
  let hi = 10;
  for (let i = 0; i < 200; i++) {
    const mid = (lo + hi) / 2;
    if (cdf(mid) < 0.975) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}
const T = t975df4();
const opts = (transform: TrialAnalysisOptions['transform'], extra: Partial<TrialAnalysisOptions> = {}): TrialAnalysisOptions => ({ transform, confidence: 0.95, pairwise: 'none', ...extra });
const REL = 1e-12;

describe('back-transformed means and ratios (hand-derived)', () => {
  it('t(0.975, 4) from the closed form is the printed table value 2.776', () => expect(Math.abs(T - 2.776)).toBeLessThan(5e-4));

  it('log: geometric means 2 and 4, s = ln 2 on 4 df; intervals 2·exp(±t ln2/√3); ratio 2 (+100 %) with limits 2·exp(±t ln2 √(2/3))', () => {
    const res = analyzeTrial(twoGroups([1, 2, 4], [2, 4, 8]), treatments, [bVsA], opts('log'));
    const h = (T * Math.LN2) / Math.sqrt(3);
    const [a, b] = res.means;
    expectClose(a.backTransformed!.estimate, 2, REL, 1, 'A');
    expectClose(a.backTransformed!.lower, 2 * Math.exp(-h), REL, 1, 'A lower');
    expectClose(a.backTransformed!.upper, 2 * Math.exp(h), REL, 1, 'A upper');
    expectClose(b.backTransformed!.estimate, 4, REL, 1, 'B');
    expectClose(b.backTransformed!.upper, 4 * Math.exp(h), REL, 1, 'B upper');
    const c = res.contrasts[0] as EstimableContrast;
    const hd = T * Math.LN2 * Math.sqrt(2 / 3);
    expect(c.scale).toBe('analysis');
    expectClose(c.estimate, Math.LN2, REL, 1, 'log ratio');
    expectClose(c.ratio!.ratio, 2, REL, 1, 'ratio');
    expectClose(c.ratio!.lower, 2 * Math.exp(-hd), REL, 1, 'ratio lower');
    expectClose(c.ratio!.upper, 2 * Math.exp(hd), REL, 1, 'ratio upper');
    expectClose(c.ratio!.percentChange, 100, REL, 1, 'percent change');
    expectClose(c.ratio!.percentLower, 100 * (2 * Math.exp(-hd) - 1), REL, 1, 'percent lower');
    expect(res.anova.cv).toBeNull();
    expect(res.transform.logOffset).toBe(0);
  });

  it('log with zeros: offset = half the smallest positive value, stated and flagged; an explicit offset is used as given', () => {
    const res = analyzeTrial(twoGroups([0, 1, 3], [2, 4, 8]), treatments, [], opts('log'));
    expect(res.transform.logOffset).toBe(0.5);
    expect(res.flags.some((f) => f.code === 'log-offset-applied')).toBe(true);
    // Hand: A on log scale = ln 0.5, ln 1.5, ln 3.5; mean back-transformed = exp(mean) - 0.5.
    const m = (Math.log(0.5) + Math.log(1.5) + Math.log(3.5)) / 3;
    expectClose(res.means[0].backTransformed!.estimate, Math.exp(m) - 0.5, REL, 1, 'offset mean');
    const given = analyzeTrial(twoGroups([0, 1, 3], [2, 4, 8]), treatments, [], opts('log', { logOffset: 1 }));
    expect(given.transform.logOffset).toBe(1);
    expectClose(given.means[0].estimate, (Math.log(1) + Math.log(2) + Math.log(4)) / 3, REL, 1, 'given offset mean');
    expect(() => analyzeTrial(twoGroups([-1, 1, 3], [2, 4, 8]), treatments, [], opts('log'))).toThrow(TrialInputError);
  });

  it('logit: A = 20, 50, 80 % (logits -ln4, 0, ln4), B = 50, 80, 1600/17 %; back-transformed 50 % and 80 % with 100/(1 + exp(-(m ± t ln4/√3)))', () => {
    const res = analyzeTrial(twoGroups([20, 50, 80], [50, 80, 1600 / 17]), treatments, [bVsA], opts('logit'));
    const h = (T * Math.log(4)) / Math.sqrt(3);
    const expit = (x: number): number => 100 / (1 + Math.exp(-x));
    expectClose(res.means[0].backTransformed!.estimate, 50, 1e-11, 1, 'A');
    expectClose(res.means[0].backTransformed!.lower, expit(-h), 1e-11, 1, 'A lower');
    expectClose(res.means[1].backTransformed!.estimate, 80, 1e-11, 1, 'B');
    expectClose(res.means[1].backTransformed!.upper, expit(Math.log(4) + h), 1e-11, 1, 'B upper');
    expect((res.contrasts[0] as EstimableContrast).ratio).toBeNull();
    const unsuited = analyzeTrial(twoGroups([20, 50, 80], [50, 80, 90]), treatments, [], opts('logit', { traitKind: 'continuous' }));
    expect(unsuited.flags.some((f) => f.code === 'transform-unsuited')).toBe(true);
  });

  it('logit at 0 % / 100 %: proportions compressed (p(n-1) + 1/2)/n, flagged, and the inverse restores the scale', () => {
    const res = analyzeTrial(twoGroups([0, 50, 100], [50, 50, 50]), treatments, [], opts('logit'));
    expect(res.transform.percentCompressionN).toBe(6);
    expect(res.flags.some((f) => f.code === 'percent-boundary-adjusted')).toBe(true);
    // B: every plot 50 % -> logit 0 -> back 50 % exactly.
    expectClose(res.means[1].backTransformed!.estimate, 50, 1e-12, 1, 'B at 50%');
    // A: compressed 1/12, 1/2, 11/12 -> logits -ln 11, 0, ln 11 -> mean 0 -> 50 %.
    expectClose(res.means[0].backTransformed!.estimate, 50, 1e-12, 1, 'A symmetric');
  });

  it('arcsine-sqrt: means and limits 100 sin²(m ± t s/√3) with m and s computed by hand', () => {
    const a = [10, 25, 40];
    const b = [30, 45, 70];
    const tr = (v: number[]): number[] => v.map((p) => Math.asin(Math.sqrt(p / 100)));
    const ta = tr(a);
    const tb = tr(b);
    const mean = (v: number[]): number => v.reduce((s, x) => s + x, 0) / v.length;
    const ss = (v: number[]): number => v.reduce((s, x) => s + (x - mean(v)) ** 2, 0);
    const s = Math.sqrt((ss(ta) + ss(tb)) / 4);
    const h = (T * s) / Math.sqrt(3);
    const res = analyzeTrial(twoGroups(a, b), treatments, [], opts('arcsine-sqrt'));
    const back = (x: number): number => 100 * Math.sin(x) ** 2;
    expectClose(res.means[0].backTransformed!.estimate, back(mean(ta)), 1e-11, 1, 'A');
    expectClose(res.means[0].backTransformed!.lower, back(mean(ta) - h), 1e-11, 1, 'A lower');
    expectClose(res.means[1].backTransformed!.upper, back(mean(tb) + h), 1e-11, 1, 'B upper');
  });

  it('sqrt: counts 1, 4, 9 and 4, 9, 16 (roots 1–3, 2–4, s = 1); means 4 and 9, limits (m ± t/√3)², a negative lower root set to 0', () => {
    const res = analyzeTrial(twoGroups([1, 4, 9], [4, 9, 16]), treatments, [], opts('sqrt'));
    const h = T / Math.sqrt(3);
    expectClose(res.means[0].backTransformed!.estimate, 4, REL, 1, 'A');
    expectClose(res.means[0].backTransformed!.lower, (2 - h) ** 2, REL, 1, 'A lower');
    expectClose(res.means[1].backTransformed!.upper, (3 + h) ** 2, REL, 1, 'B upper');
    const low = analyzeTrial(twoGroups([0, 1, 0], [4, 9, 16]), treatments, [], opts('sqrt'));
    expect(low.means[0].lower as number).toBeLessThan(0);
    expect(low.means[0].backTransformed!.lower).toBe(0);
  });
});
