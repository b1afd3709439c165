// The observed Hessian of the per-trial-residual crossed model, as lmerTest's Satterthwaite df
// use it, without forming it (one row per trial): H x by a forward difference of the analytic
// gradient along x (relative step 1e-6: truncation and rounding both near 1e-6 relative), and
// H x = g solved by conjugate gradients preconditioned with the average information
// (H = 2 AI - tr(P V_k P V_l), near AI where the fit is informative, so few steps are needed).
// The df need g'H^-1 g only, whose error is quadratic in the CG residual: 1e-5 of |g| is ample.
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import { evaluatePerTrial } from './perTrialResidualModel.js';
import { perTrialGradient } from './perTrialResidualDerivatives.js';
import type { InformationSolver } from './perTrialResidualSolve.js';

/** Relative change of the most-moved variance in a difference step. */
const STEP = 1e-6;

export interface HessianSolve {
  readonly x: Float64Array;
  readonly iterations: number;
  readonly converged: boolean;
}

/** x -> H x at (v, r) over the free terms and every residual (x zero on the terms held at zero). */
export function hessianProduct(d: CrossedData, L: CrossedLayout, v: Float64Array, r: Float64Array, freeTerm: readonly boolean[]): (x: Float64Array) => Float64Array | null {
  const nT = v.length;
  const ev0 = evaluatePerTrial(d, L, v, r);
  const g0 = ev0 ? perTrialGradient(d, L, ev0) : null;
  return (x: Float64Array) => {
    if (!g0) return null;
    let worst = 0;
    for (let k = 0; k < nT; k++) if (freeTerm[k]) worst = Math.max(worst, Math.abs(x[k]) / v[k]);
    for (let i = 0; i < r.length; i++) worst = Math.max(worst, Math.abs(x[nT + i]) / r[i]);
    if (worst === 0) return new Float64Array(x.length);
    const h = STEP / worst;
    // |h x_k| <= 1e-6 v_k: every variance stays positive
    const vv = Float64Array.from(v, (a, k) => (freeTerm[k] ? a + h * x[k] : a));
    const rr = Float64Array.from(r, (a, i) => a + h * x[nT + i]);
    const ev = evaluatePerTrial(d, L, vv, rr);
    if (!ev) return null;
    const plus = perTrialGradient(d, L, ev);
    const out = new Float64Array(x.length);
    for (let i = 0; i < out.length; i++) out[i] = i < nT && !freeTerm[i] ? 0 : (plus[i] - g0[i]) / h;
    return out;
  };
}

/** H x = g by conjugate gradients preconditioned with AI^-1; null when H is not positive definite along the way. */
export function hessianSolve(product: (x: Float64Array) => Float64Array | null, ai: InformationSolver, g: Float64Array, o: { tolerance?: number; maxIterations?: number } = {}): HessianSolve | null {
  const n = g.length;
  const tolerance = o.tolerance ?? 1e-5;
  const maxIterations = o.maxIterations ?? 50;
  const x = new Float64Array(n);
  const res = Float64Array.from(g);
  const norm0 = Math.sqrt(dot(g, g));
  if (norm0 === 0) return { x, iterations: 0, converged: true };
  let z = ai.solve(res).x;
  const p = Float64Array.from(z);
  let rz = dot(res, z);
  for (let it = 1; it <= maxIterations; it++) {
    const hp = product(p);
    if (!hp) return null;
    const php = dot(p, hp);
    if (!(php > 0)) return null;
    const alpha = rz / php;
    for (let i = 0; i < n; i++) {
      x[i] += alpha * p[i];
      res[i] -= alpha * hp[i];
    }
    if (Math.sqrt(dot(res, res)) <= tolerance * norm0) return { x, iterations: it, converged: true };
    z = ai.solve(res).x;
    const rzNew = dot(res, z);
    const beta = rzNew / rz;
    rz = rzNew;
    for (let i = 0; i < n; i++) p[i] = z[i] + beta * p[i];
  }
  return { x, iterations: maxIterations, converged: false };
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}
