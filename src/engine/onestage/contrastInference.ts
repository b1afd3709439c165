// Contrasts of the treatment means with denominator degrees of freedom.
// Satterthwaite as lmerTest defines it: df = 2 (l'Cl)^2 / (g' A g), g_k = d(l'Cl)/dtheta_k =
// l'C P_k C l, A = 2 O^-1 the asymptotic covariance of the variance parameters from the observed
// Hessian O of -2 logLik (lmerTest differentiates numerically in its own parametrisation; at an
// interior optimum the two agree, and a component at zero drops out of both). Kenward–Roger as
// pbkrtest's vcovAdj/Lb_ddf: W = 2 E^-1 from the expected information (kenwardRogerWeights.ts),
// adjusted covariance C + 2 C U C, and the df of Kenward & Roger (1997) for a single contrast (q = 1).
import { tQuantile, tTwoSidedP } from '../stats/distributions.js';
import type { Evaluation } from './remlCriterion.js';
import type { SecondOrder } from './secondOrder.js';
import type { InverseOnFree } from './informationSolver.js';
import type { KenwardRogerWeights } from './kenwardRogerWeights.js';

export function quadraticForm(a: Float64Array, n: number, x: ArrayLike<number>, y: ArrayLike<number> = x): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    if (x[i] === 0) continue;
    let r = 0;
    for (let j = 0; j < n; j++) r += a[i * n + j] * y[j];
    s += x[i] * r;
  }
  return s;
}

/** C l: the contrast's direction in coefficient space. */
function cTimes(ev: Evaluation, p: number, l: ArrayLike<number>): Float64Array {
  const out = new Float64Array(p);
  for (let i = 0; i < p; i++) {
    let s = 0;
    for (let j = 0; j < p; j++) s += ev.c[i * p + j] * l[j];
    out[i] = s;
  }
  return out;
}

/** `observed`: O^-1 on the free parameters (informationSolver.ts), worked out once per fit and shared by every contrast. */
export function satterthwaiteDf(ev: Evaluation, so: SecondOrder, free: readonly number[], observed: InverseOnFree | null, l: ArrayLike<number>): number {
  const p = ev.beta.length;
  const cl = cTimes(ev, p, l);
  let v = 0;
  for (let i = 0; i < p; i++) v += l[i] * cl[i];
  const g = free.map((k) => quadraticForm(so.p[k], p, cl));
  if (!observed) return NaN;
  // g' A g with A = 2 O^-1
  const gag = 2 * observed.quadratic(g);
  return (2 * v * v) / gag;
}

export function kenwardRogerContrast(ev: Evaluation, so: SecondOrder, kr: KenwardRogerWeights, u: Float64Array, l: ArrayLike<number>): { df: number; variance: number } {
  const p = ev.beta.length;
  const cl = cTimes(ev, p, l);
  let v0 = 0;
  for (let i = 0; i < p; i++) v0 += l[i] * cl[i];
  const variance = v0 + 2 * quadraticForm(u, p, cl);
  // a_k = l'C P_k C l / v0 over the kept parameters; A1 = a'W a
  const nP = so.p.length;
  const a = new Float64Array(nP);
  for (const k of kr.index) a[k] = quadraticForm(so.p[k], p, cl) / v0;
  const wa = kr.apply(a, 1);
  let a1 = 0;
  for (let k = 0; k < nP; k++) a1 += a[k] * wa[k];
  // For one contrast (q = 1) Theta is rank one, so pbkrtest's A1 and A2 coincide.
  return { df: kenwardRogerDf(a1, a1, 1), variance };
}

/** Kenward & Roger's (1997) denominator df from A1, A2 for q rows, as pbkrtest's Lb_ddf. */
export function kenwardRogerDf(a1: number, a2: number, q: number): number {
  const B = (1 / (2 * q)) * (a1 + 6 * a2);
  const g = ((q + 1) * a1 - (q + 4) * a2) / ((q + 2) * a2);
  const c1 = g / (3 * q + 2 * (1 - g));
  const c2 = (q - g) / (3 * q + 2 * (1 - g));
  const c3 = (q + 2 - g) / (3 * q + 2 * (1 - g));
  let V0 = 1 + c1 * B;
  const V1 = 1 - c2 * B;
  const V2 = 1 - c3 * B;
  if (Math.abs(V0) < 1e-10) V0 = 0;
  const ratio = Math.abs(V1) < 1e-14 ? 0 : (1 - a2 / q) / V1;
  const rho = (1 / q) * ratio * ratio * (V0 / V2);
  return 4 + (q + 2) / (q * rho - 1);
}

export function tInterval(estimate: number, se: number, df: number, confidence: number): { lower: number; upper: number; p: number } {
  const dfUse = Number.isFinite(df) && df > 0 ? df : Infinity;
  const half = tQuantile(1 - (1 - confidence) / 2, dfUse) * se;
  return { lower: estimate - half, upper: estimate + half, p: tTwoSidedP(estimate / se, dfUse) };
}
