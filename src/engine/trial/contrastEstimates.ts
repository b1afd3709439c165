// Resolved contrasts (coefficients per treatment / divisor) applied to the adjusted means of
// one trial. The contrast is formed in coefficient space, l = sum_i c_i L_i / d, and tested
// for estimability there, so a contrast is refused only when this trial cannot estimate it.
import type { ResolvedContrast } from '../contrasts/resolve.js';
import { involvedTreatments } from '../contrasts/resolve.js';
import type { TreatmentInfo } from '../types.js';
import { tQuantile, tTwoSidedP } from '../stats/distributions.js';
import { estimate, isEstimableKept, unscaledCrossKept, type LinearFit } from './linearFit.js';
import type { MeanVectors } from './adjustedMeans.js';
import type { RatioRecord, TrialContrast, TransformKind } from './types.js';
import { num } from '../jsonSafe.js';

export function contrastVector(c: ResolvedContrast, mv: MeanVectors, p: number): Float64Array | null {
  const l = new Float64Array(p);
  for (const [code, coef] of Object.entries(c.coefficients)) {
    if (coef === 0) continue;
    const v = mv.vectors[mv.codes.indexOf(code)];
    if (!v) return null;
    for (let j = 0; j < p; j++) l[j] += (coef * v[j]) / c.divisor;
  }
  return l;
}

// A contrast's coefficient vector depends on the mean vectors (kept per layout) and the contrast.
const vectorMemo = new WeakMap<MeanVectors, WeakMap<ResolvedContrast, { absent: string[]; l: Float64Array | null }>>();

function keptVector(c: ResolvedContrast, mv: MeanVectors, p: number): { absent: string[]; l: Float64Array | null } {
  let byContrast = vectorMemo.get(mv);
  if (!byContrast) vectorMemo.set(mv, (byContrast = new WeakMap()));
  let v = byContrast.get(c);
  if (!v) {
    const absent = involvedTreatments(c).filter((code) => !mv.codes.includes(code) || !mv.vectors[mv.codes.indexOf(code)]);
    v = { absent, l: absent.length > 0 ? null : contrastVector(c, mv, p) };
    byContrast.set(c, v);
  }
  return v;
}

export function estimateContrast(
  c: ResolvedContrast,
  mv: MeanVectors,
  fit: LinearFit,
  confidence: number,
  transform: TransformKind,
  treatments: readonly TreatmentInfo[],
): TrialContrast {
  if (c.leftOut !== undefined) return { name: c.name, kind: c.kind, estimable: false, reason: c.leftOut };
  const kept = keptVector(c, mv, fit.coefficients.length);
  const absent = kept.absent;
  if (absent.length > 0)
    return { name: c.name, kind: c.kind, estimable: false, reason: `treatment${absent.length > 1 ? 's' : ''} ${absent.join(', ')} ${absent.length > 1 ? 'have' : 'has'} no analysed plots in this trial` };
  const l = kept.l as Float64Array;
  if (!isEstimableKept(fit, l))
    return { name: c.name, kind: c.kind, estimable: false, reason: 'not estimable from this trial: the layout leaves it confounded with aliased terms' };
  const df = fit.residualDf;
  const est = estimate(fit, l);
  const se = Math.sqrt(fit.sigma2 * unscaledCrossKept(fit, l, l));
  const tq = df > 0 ? tQuantile(1 - (1 - confidence) / 2, df) : NaN;
  const t = est / se;
  const lower = est - tq * se;
  const upper = est + tq * se;
  return {
    name: c.name,
    kind: c.kind,
    estimable: true,
    estimate: num(est),
    se: num(se),
    df,
    t: num(t),
    p: num(df > 0 ? tTwoSidedP(t, df) : NaN),
    lower: num(lower),
    upper: num(upper),
    confidence,
    coefficients: { ...c.coefficients },
    divisor: c.divisor,
    meaning: c.meaning,
    scale: transform === 'none' ? 'original' : 'analysis',
    ratio: transform === 'log' ? ratioFor(c, treatments, est, lower, upper) : null,
  };
}

/** On the log scale a difference of averages (or a linear slope) is a log ratio. */
function ratioFor(c: ResolvedContrast, treatments: readonly TreatmentInfo[], est: number, lower: number, upper: number): RatioRecord | null {
  if (isDifferenceOfAverages(c)) return ratioRecord(est, lower, upper, 'ratio of geometric means (first group / second group); percent change = 100 (ratio - 1)');
  const factor = linearSlopeFactor(c, treatments);
  if (factor) return ratioRecord(est, lower, upper, `multiplicative change per unit of ${factor}; percent change per unit = 100 (ratio - 1)`);
  return null;
}

export function ratioRecord(est: number, lower: number, upper: number, meaning: string): RatioRecord {
  const r = Math.exp(est);
  const lo = Math.exp(lower);
  const hi = Math.exp(upper);
  return { ratio: num(r), lower: num(lo), upper: num(hi), percentChange: num(100 * (r - 1)), percentLower: num(100 * (lo - 1)), percentUpper: num(100 * (hi - 1)), meaning };
}

/** Positive coefficients / divisor sum to 1 and negative ones to -1. */
export function isDifferenceOfAverages(c: ResolvedContrast): boolean {
  let pos = 0;
  let neg = 0;
  for (const v of Object.values(c.coefficients)) {
    if (v > 0) pos += v / c.divisor;
    else neg += v / c.divisor;
  }
  return Math.abs(pos - 1) < 1e-9 && Math.abs(neg + 1) < 1e-9;
}

/** The factor whose centred levels are the coefficients, with divisor their sum of squares. */
function linearSlopeFactor(c: ResolvedContrast, treatments: readonly TreatmentInfo[]): string | null {
  if (c.kind !== 'trend') return null;
  const names = new Set(treatments.flatMap((t) => Object.keys(t.levels)));
  for (const name of names) {
    const points = treatments.filter((t) => typeof t.levels[name] === 'number');
    if (points.length < 2) continue;
    const mean = points.reduce((s, t) => s + (t.levels[name] as number), 0) / points.length;
    let ss = 0;
    let ok = true;
    for (const t of treatments) {
      const lv = t.levels[name];
      const expected = typeof lv === 'number' ? lv - mean : 0;
      if (typeof lv === 'number') ss += expected ** 2;
      if (Math.abs((c.coefficients[t.code] ?? 0) - expected) > 1e-9 * Math.max(1, Math.abs(expected))) ok = false;
    }
    if (ok && Math.abs(ss - c.divisor) <= 1e-9 * ss) return name;
  }
  return null;
}
