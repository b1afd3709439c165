// ML / REML tau² for the intercept-only pool, by Newton's method on the score with its exact
// derivative, safeguarded by a bracket. The general route (tau2Estimators.ts: Fisher scoring,
// then Brent on the score) finds the same root of the same score; this one needs a few passes
// over the trials instead of dozens and allocates nothing per pass, which matters where pools
// are refitted once per trial (leave-one-out, cumulative: quadratic in the number of trials).
//
// With w_i = 1 / (v_i + t), W = sum w, mu = sum w y / W, r = y - mu:
//   score   = ( sum w² r² - sum w [+ sum w² / W for REML] ) / 2           (d logLik / dt)
//   d score = ( -2 sum w³ r² + 2 (sum w² r)² / W + sum w²
//               [- 2 sum w³ / W + (sum w²)² / W² for REML] ) / 2
// (dw/dt = -w², dmu/dt = -sum w² r / W).

export interface InterceptRoot {
  /** The root of the score, or 0 where the score is <= 0 at 0 (the boundary). */
  readonly tau2: number;
  readonly converged: boolean;
  readonly iterations: number;
  readonly atBoundary: boolean;
}

const MAX_ITERATIONS = 200;

/** logLikTau2 of the intercept-only fit at t, from sums (no fit object): -(sum log(v + t) + sum w r² [+ log sum w]) / 2. */
export function interceptLogLik(y: ArrayLike<number>, v: ArrayLike<number>, t: number, reml: boolean): number {
  const k = y.length;
  let sw = 0;
  let swy = 0;
  let logs = 0;
  for (let i = 0; i < k; i++) {
    const w = 1 / (v[i] + t);
    sw += w;
    swy += w * y[i];
    logs += Math.log(v[i] + t);
  }
  const mu = swy / sw;
  let rss = 0;
  for (let i = 0; i < k; i++) rss += (y[i] - mu) * (y[i] - mu) / (v[i] + t);
  return -0.5 * (logs + rss + (reml ? Math.log(sw) : 0));
}

/** Score and its derivative at t, into out[0], out[1]. */
export function interceptScore(y: ArrayLike<number>, v: ArrayLike<number>, t: number, reml: boolean, out: Float64Array): void {
  const k = y.length;
  let sw = 0;
  let swy = 0;
  for (let i = 0; i < k; i++) {
    const w = 1 / (v[i] + t);
    sw += w;
    swy += w * y[i];
  }
  const mu = swy / sw;
  let sw2 = 0;
  let sw3 = 0;
  let sw2r = 0;
  let sw2r2 = 0;
  let sw3r2 = 0;
  for (let i = 0; i < k; i++) {
    const w = 1 / (v[i] + t);
    const r = y[i] - mu;
    const w2 = w * w;
    sw2 += w2;
    sw3 += w2 * w;
    sw2r += w2 * r;
    sw2r2 += w2 * r * r;
    sw3r2 += w2 * w * r * r;
  }
  let score = sw2r2 - sw;
  let slope = -2 * sw3r2 + (2 * sw2r * sw2r) / sw + sw2;
  if (reml) {
    score += sw2 / sw;
    slope += (-2 * sw3) / sw + (sw2 * sw2) / (sw * sw);
  }
  out[0] = score / 2;
  out[1] = slope / 2;
}

/**
 * The root of the score that the general route finds from `start`: bracket it as that route
 * does (doubling upward while the score is positive, halving downward while it is not; the
 * boundary 0 when the score is <= 0 down to t = 0), then Newton steps kept inside the bracket
 * (bisection where a step would leave it), to 1e-14 relative.
 */
export function interceptTau2Root(y: ArrayLike<number>, v: ArrayLike<number>, reml: boolean, start: number): InterceptRoot {
  let scale = 0;
  for (let i = 0; i < v.length; i++) scale += v[i];
  scale /= v.length;
  const sd = new Float64Array(2);
  let passes = 0;
  const score = (t: number): number => {
    passes++;
    interceptScore(y, v, t, reml, sd);
    return sd[0];
  };
  const t0 = Math.max(0, start);
  let lo = t0;
  let hi = t0;
  if (score(t0) > 0) {
    let step = Math.max(t0, 1e-6 * scale);
    hi = t0 + step;
    for (let j = 0; score(hi) > 0; j++) {
      if (j > 2000) return { tau2: t0, converged: false, iterations: passes, atBoundary: false };
      lo = hi;
      step *= 2;
      hi = t0 + step;
    }
  } else {
    if (t0 === 0) return { tau2: 0, converged: true, iterations: passes, atBoundary: true };
    lo = t0 / 2;
    for (let j = 0; score(lo) <= 0; j++) {
      hi = lo;
      lo = j < 80 ? lo / 2 : 0;
      if (lo === 0) break;
    }
    if (lo === 0 && score(0) <= 0) return { tau2: 0, converged: true, iterations: passes, atBoundary: true };
  }
  // Newton inside [lo, hi] (score > 0 at lo, <= 0 at hi)
  let t = (lo + hi) / 2;
  for (let it = 0; it < MAX_ITERATIONS; it++) {
    const s = score(t);
    const ds = sd[1];
    if (s === 0) return { tau2: t, converged: true, iterations: passes, atBoundary: t === 0 };
    if (s > 0) lo = t;
    else hi = t;
    let next = ds < 0 ? t - s / ds : NaN;
    if (!(next > lo && next < hi)) next = (lo + hi) / 2;
    const tol = 1e-14 * hi;
    if (Math.abs(next - t) <= tol || hi - lo <= tol) return { tau2: next, converged: true, iterations: passes, atBoundary: false };
    t = next;
  }
  return { tau2: t, converged: false, iterations: passes, atBoundary: false };
}
