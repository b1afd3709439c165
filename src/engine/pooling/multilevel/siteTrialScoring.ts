// A fast refit of the site-and-trial model for the bootstrap: Fisher scoring on (site tau²,
// trial tau²) from a warm start, with the zero boundary handled by fixing a component at zero
// while its score points below it, and step halving whenever the likelihood would fall. Every
// quantity comes from per-site sums (V is block-diagonal by site; each block diag(d) + s 11'),
// O(trials) per iteration. The nested Brent searches of fitSiteTrial remain the reference; this
// one is checked against them (test/engine/pooling/multilevel/siteTrialScoring.test.ts) and
// falls back to them when it does not converge.
import { fitSiteTrial, searchUpper, type SiteTrialEstimates } from './fitSiteTrial.js';
import { siteTrialLogLik, type LikelihoodKind, type SiteGroup } from './siteTrialLikelihood.js';

/** Score and expected information at (s, t); REML adds the terms of the GLS mean. */
export function scoreAndInformation(groups: readonly SiteGroup[], s: number, t: number, reml: boolean): { u: [number, number]; info: [number, number, number] } {
  // pass 1: the GLS mean and c = 1'V⁻¹1
  let c = 0;
  let wy = 0;
  for (const g of groups) {
    let S = 0;
    let Sy = 0;
    for (let j = 0; j < g.y.length; j++) {
      const a = 1 / (g.v[j] + t);
      S += a;
      Sy += a * g.y[j];
    }
    const h = 1 / (1 + s * S);
    c += S * h;
    wy += Sy * h;
  }
  const mu = wy / c;
  // pass 2: traces and quadratic forms, per site (A = 11' for the site tau², I for the trial tau²)
  let trWJ = 0, trW = 0, eJe = 0, ee = 0;
  let trWJWJ = 0, trWJW = 0, trWW = 0;
  let wJw = 0, wIw = 0, wJWJw = 0, wJWw = 0, wWw = 0;
  for (const g of groups) {
    let S = 0, A2 = 0, A3 = 0, R1 = 0;
    for (let j = 0; j < g.y.length; j++) {
      const a = 1 / (g.v[j] + t);
      S += a;
      A2 += a * a;
      A3 += a * a * a;
      R1 += a * (g.y[j] - mu);
    }
    const h = 1 / (1 + s * S);
    const Sh = S * h;
    trWJ += Sh;
    trW += S - s * h * A2;
    const oneE = h * R1;
    eJe += oneE * oneE;
    for (let j = 0; j < g.y.length; j++) {
      const a = 1 / (g.v[j] + t);
      const e = a * (g.y[j] - mu) - s * h * R1 * a;
      ee += e * e;
    }
    trWJWJ += Sh * Sh;
    trWJW += h * h * A2;
    trWW += A2 - 2 * s * h * A3 + s * s * h * h * A2 * A2;
    wJw += Sh * Sh;
    wIw += h * h * A2;
    wJWJw += Sh * Sh * Sh;
    wJWw += Sh * h * h * A2;
    wWw += h * h * (A3 - s * h * A2 * A2);
  }
  const k = reml ? 1 : 0;
  const u: [number, number] = [-0.5 * (trWJ - (k * wJw) / c) + 0.5 * eJe, -0.5 * (trW - (k * wIw) / c) + 0.5 * ee];
  const tr = (ab: number, awbw: number, aw: number, bw: number) => 0.5 * (ab - k * ((2 * awbw) / c - (aw * bw) / (c * c)));
  const info: [number, number, number] = [tr(trWJWJ, wJWJw, wJw, wJw), tr(trWJW, wJWw, wJw, wIw), tr(trWW, wWw, wIw, wIw)];
  return { u, info };
}

/** Fisher scoring from (s0, t0); null when it does not settle (the caller falls back to the searches). */
export function scoreSiteTrial(groups: readonly SiteGroup[], kind: LikelihoodKind, s0: number, t0: number): SiteTrialEstimates | null {
  const reml = kind === 'reml';
  const upper = searchUpper(groups);
  let s = Math.max(0, s0);
  let t = Math.max(0, t0);
  let ll = siteTrialLogLik(groups, s, t, kind).logLik;
  let evaluations = 1;
  for (let iteration = 0; iteration < 200; iteration++) {
    const { u, info } = scoreAndInformation(groups, s, t, reml);
    // components held at zero while their score points below it
    const freeS = !(s === 0 && u[0] <= 0);
    const freeT = !(t === 0 && u[1] <= 0);
    // settled: each free component's score is nil on the scale of its information
    const settled = (!freeS || Math.abs(u[0]) <= 1e-9 * Math.sqrt(info[0])) && (!freeT || Math.abs(u[1]) <= 1e-9 * Math.sqrt(info[2]));
    if (settled) {
      const at = siteTrialLogLik(groups, s, t, kind);
      return { siteTau2: s, trialTau2: t, logLik: at.logLik, mu: at.mu, muVariance: at.muVariance, evaluations, upper, converged: s < upper && t < upper };
    }
    let ds = 0;
    let dt = 0;
    if (freeS && freeT) {
      const det = info[0] * info[2] - info[1] * info[1];
      if (!(det > 0)) return null;
      ds = (info[2] * u[0] - info[1] * u[1]) / det;
      dt = (info[0] * u[1] - info[1] * u[0]) / det;
    } else if (freeS) ds = info[0] > 0 ? u[0] / info[0] : 0;
    else if (freeT) dt = info[2] > 0 ? u[1] / info[2] : 0;
    // step along the scoring direction: the better of 1, 1/2 and the parabola's maximum through
    // them (the expected information can be far from the observed one near a boundary, so the
    // plain step zig-zags), halved further while the likelihood would not rise
    const at = (step: number) => {
      const sNew = Math.max(0, s + step * ds);
      const tNew = Math.max(0, t + step * dt);
      evaluations++;
      return { s: sNew, t: tNew, ll: siteTrialLogLik(groups, sNew, tNew, kind).logLik };
    };
    const one = at(1);
    const half = at(0.5);
    let best = one.ll >= half.ll ? one : half;
    const curvature = 2 * one.ll + 2 * ll - 4 * half.ll;
    if (curvature < 0) {
      const slope = 4 * half.ll - 3 * ll - one.ll;
      const peak = at(Math.min(2, Math.max(0.01, -slope / (2 * curvature))));
      if (peak.ll > best.ll) best = peak;
    }
    for (let step = 0.25; !(best.ll > ll) && step > 1e-12; step /= 2) best = at(step);
    if (!(best.ll > ll)) break; // no ascent along the scoring direction: stationary up to rounding
    const moved = Math.abs(best.s - s) + Math.abs(best.t - t);
    s = best.s;
    t = best.t;
    ll = best.ll;
    if (moved <= 1e-12 * (1 + s + t)) break;
  }
  const { u, info } = scoreAndInformation(groups, s, t, reml);
  const stationary = (s === 0 && u[0] <= 0 ? true : Math.abs(u[0]) <= 1e-5 * Math.sqrt(info[0])) && (t === 0 && u[1] <= 0 ? true : Math.abs(u[1]) <= 1e-5 * Math.sqrt(info[2]));
  if (!stationary) return null;
  const fit = siteTrialLogLik(groups, s, t, kind);
  return { siteTau2: s, trialTau2: t, logLik: fit.logLik, mu: fit.mu, muVariance: fit.muVariance, evaluations, upper, converged: s < upper && t < upper };
}

/** The bootstrap's refit: scoring from the warm start, the nested searches when scoring does not settle or lands below them. */
export function refitSiteTrial(groups: readonly SiteGroup[], kind: LikelihoodKind, s0: number, t0: number, searchTolerance: number): SiteTrialEstimates {
  return scoreSiteTrial(groups, kind, s0, t0) ?? fitSiteTrial(groups, kind, searchTolerance);
}
