// The intercept-only ML / REML pool of a subset of trials from sums kept once, for the
// leave-one-out and cumulative analyses: k pools of ~k trials each cost O(k²) if each is refitted
// from its trials; here each costs O(1) after O(k) set-up.
//
// Every quantity the fit needs at tau² = t is a sum over the trials of w^m (y - c)^p with
// w = 1 / (v + t), m = 1..3, p = 0..2. Around an anchor t0, with a = v + t0 and t = t0 + d,
//   w^m = a^-m (1 + d/a)^-m = sum_n C(m+n-1, n) (-d)^n a^-(m+n),
// so each sum is a series in d over the power sums P[j][p] = sum a^-j (y - c)^p, which add over
// trials (a subset's sums are sums of its members'), and log(v + t) likewise. With |d| / min a
// <= RHO_MAX the series, cut after SERIES_TERMS terms, is exact to rounding (remainder below
// RHO_MAX^SERIES_TERMS ~ 1e-17 of the leading term); outside that the caller refits directly.
// Units: v and t are divided by s = min a and (y - c) by sqrt(s), so the power sums stay near 1
// (a^-27 of a variance of 1e-8 would overflow); the score's root and the log-likelihood
// differences are unchanged by that scaling.

export const SERIES_TERMS = 24;
const RHO_MAX = 0.2;
/** Highest power of 1/a used: m + n <= 3 + SERIES_TERMS. */
const POWERS = SERIES_TERMS + 3;
const LOG_SLOT = 3 * POWERS;
const ZERO_SLOT = LOG_SLOT + 1; // sum v^-1 (y-c)^p, p = 0..2, at t = 0
const LOG_ZERO_SLOT = ZERO_SLOT + 3; // sum log v
/** Length of one vector of sums. */
export const SUM_LENGTH = LOG_ZERO_SLOT + 1;

export interface SeriesAnchor {
  /** tau² the series is centred on (original units). */
  readonly t0: number;
  /** Centre c of the estimates. */
  readonly centre: number;
  /** Unit s of variances: min over the trials of v + t0. */
  readonly unit: number;
}

/** An anchor for the trials with variances `v` (only their minimum matters); every trial added must have v + t0 >= unit. */
export function makeAnchor(v: ArrayLike<number>, count: number, t0: number, centre: number): SeriesAnchor {
  let minV = Infinity;
  for (let i = 0; i < count; i++) if (v[i] < minV) minV = v[i];
  return { t0, centre, unit: minV + t0 };
}

/** Add trial (v, y)'s terms to the sums at `offset` of `sums`. */
export function addTrialTerms(sums: Float64Array, offset: number, v: number, y: number, anchor: SeriesAnchor): void {
  const s = anchor.unit;
  const vs = v / s;
  const inv = 1 / (vs + anchor.t0 / s);
  const yc = (y - anchor.centre) / Math.sqrt(s);
  const yc2 = yc * yc;
  let pow = inv;
  for (let j = 0; j < POWERS; j++) {
    const o = offset + 3 * j;
    sums[o] += pow;
    sums[o + 1] += pow * yc;
    sums[o + 2] += pow * yc2;
    pow *= inv;
  }
  sums[offset + LOG_SLOT] += Math.log(vs + anchor.t0 / s);
  const w0 = 1 / vs;
  sums[offset + ZERO_SLOT] += w0;
  sums[offset + ZERO_SLOT + 1] += w0 * yc;
  sums[offset + ZERO_SLOT + 2] += w0 * yc2;
  sums[offset + LOG_ZERO_SLOT] += Math.log(vs);
}

/** What one evaluation at t gives (scaled units except where said). */
interface Evaluation {
  score: number;
  slope: number;
  sw: number;
  mu: number;
  rss: number;
  logLik: number;
}

const scratch = new Float64Array(9);

/** Score, its slope, weighted mean and (restricted) log-likelihood at scaled d = (t - t0) / s. */
function evaluate(sums: Float64Array, offset: number, d: number, reml: boolean, out: Evaluation): void {
  const S = scratch;
  S.fill(0);
  let pw = 1;
  for (let n = 0; n < SERIES_TERMS; n++) {
    const c2 = n + 1;
    const c3 = ((n + 1) * (n + 2)) / 2;
    const o1 = offset + 3 * n;
    const o2 = o1 + 3;
    const o3 = o1 + 6;
    S[0] += pw * sums[o1];
    S[1] += pw * sums[o1 + 1];
    S[2] += pw * sums[o1 + 2];
    S[3] += c2 * pw * sums[o2];
    S[4] += c2 * pw * sums[o2 + 1];
    S[5] += c2 * pw * sums[o2 + 2];
    S[6] += c3 * pw * sums[o3];
    S[7] += c3 * pw * sums[o3 + 1];
    S[8] += c3 * pw * sums[o3 + 2];
    pw *= -d;
  }
  const sw = S[0];
  const mu = S[1] / sw;
  const sw2 = S[3];
  const sw3 = S[6];
  const sw2r = S[4] - mu * S[3];
  const sw2r2 = S[5] - 2 * mu * S[4] + mu * mu * S[3];
  const sw3r2 = S[8] - 2 * mu * S[7] + mu * mu * S[6];
  let score = sw2r2 - sw;
  let slope = -2 * sw3r2 + (2 * sw2r * sw2r) / sw + sw2;
  if (reml) {
    score += sw2 / sw;
    slope += (-2 * sw3) / sw + (sw2 * sw2) / (sw * sw);
  }
  out.score = score / 2;
  out.slope = slope / 2;
  out.sw = sw;
  out.mu = mu;
  out.rss = S[2] - mu * S[1];
  // sum log(a + d) = sum log a + sum_{n>=1} (-1)^(n+1) d^n / n P[n][0]
  let logs = sums[offset + LOG_SLOT];
  let dn = d;
  for (let n = 1; n <= SERIES_TERMS; n++) {
    logs += ((n % 2 === 1 ? 1 : -1) * dn * sums[offset + 3 * (n - 1)]) / n;
    dn *= d;
  }
  out.logLik = -0.5 * (logs + out.rss + (reml ? Math.log(sw) : 0));
}

function logLikAtZero(sums: Float64Array, offset: number, reml: boolean): number {
  const sw = sums[offset + ZERO_SLOT];
  const swy = sums[offset + ZERO_SLOT + 1];
  const rss = sums[offset + ZERO_SLOT + 2] - (swy * swy) / sw;
  return -0.5 * (sums[offset + LOG_ZERO_SLOT] + rss + (reml ? Math.log(sw) : 0));
}

export interface SeriesFit {
  /** tau² (original units), 0 at the boundary. */
  tau2: number;
  atBoundary: boolean;
  /** Weighted mean. */
  estimate: number;
  /** Model-based SE 1 / sqrt(sum w). */
  seConventional: number;
  /** sum w (y - mu)²: the generalised Q at tau² (for the HKSJ scale). */
  weightedRss: number;
}

const work: Evaluation = { score: 0, slope: 0, sw: 0, mu: 0, rss: 0, logLik: 0 };
const MAX_ITERATIONS = 100;

/**
 * The root of the score nearest `start` for the trials whose sums sit at `offset`, as the direct
 * route (interceptTau2Root, then the boundary check of estimateTau2) finds it; null when the
 * search would leave the range where the series is exact (the caller then refits directly).
 */
export function seriesPool(sums: Float64Array, offset: number, anchor: SeriesAnchor, reml: boolean, start: number, out: SeriesFit): SeriesFit | null {
  const s = anchor.unit;
  const t0 = anchor.t0 / s;
  const limit = RHO_MAX; // |d| in units of min a
  const inRange = (t: number): boolean => Math.abs(t - t0) <= limit;
  let t = Math.max(0, start) / s;
  if (!inRange(t)) return null;
  evaluate(sums, offset, t - t0, reml, work);
  let root: number | null = null;
  let boundary = false;
  if (t === 0 && work.score <= 0) boundary = true;
  else {
    let lo = -1;
    let hi = Infinity;
    for (let it = 0; it < MAX_ITERATIONS && root === null; it++) {
      const sc = work.score;
      if (sc === 0) {
        root = t;
        break;
      }
      if (sc > 0) lo = t;
      else hi = t;
      let next = work.slope < 0 ? t - sc / work.slope : NaN;
      if (lo >= 0 && hi < Infinity && !(next > lo && next < hi)) next = (lo + hi) / 2;
      if (!Number.isFinite(next)) return null;
      if (next <= 0) {
        // the root is below t: at the boundary, or between 0 and t
        if (!inRange(0)) return null;
        evaluate(sums, offset, -t0, reml, work);
        if (work.score <= 0) {
          boundary = true;
          break;
        }
        lo = 0;
        next = hi < Infinity ? hi / 2 : t / 2;
      }
      if (!inRange(next)) return null;
      const tol = Math.max(1e-14 * Math.max(next, t), 1e-15);
      if (Math.abs(next - t) <= tol || (lo >= 0 && hi - lo <= tol)) root = next;
      else {
        t = next;
        evaluate(sums, offset, t - t0, reml, work);
      }
    }
    if (root === null && !boundary) return null;
  }
  if (!boundary) {
    evaluate(sums, offset, (root as number) - t0, reml, work);
    // a boundary maximum beats an interior stationary point only if the likelihood is multimodal
    if (logLikAtZero(sums, offset, reml) > work.logLik) boundary = true;
  }
  if (boundary) {
    if (!inRange(0)) {
      // the fit at 0 lies outside the series' range: from the zero sums directly
      const sw0 = sums[offset + ZERO_SLOT];
      const mu0 = sums[offset + ZERO_SLOT + 1] / sw0;
      out.tau2 = 0;
      out.atBoundary = true;
      out.estimate = anchor.centre + Math.sqrt(s) * mu0;
      out.seConventional = Math.sqrt(s / sw0);
      out.weightedRss = sums[offset + ZERO_SLOT + 2] - mu0 * sums[offset + ZERO_SLOT + 1];
      return out;
    }
    evaluate(sums, offset, -t0, reml, work);
  }
  out.tau2 = boundary ? 0 : (root as number) * s;
  out.atBoundary = boundary;
  out.estimate = anchor.centre + Math.sqrt(s) * work.mu;
  out.seConventional = Math.sqrt(s / work.sw);
  out.weightedRss = work.rss;
  return out;
}
