// The observed Hessian of the per-trial-residual crossed model, as lmerTest's Satterthwaite df
// use it, without forming it (one row per trial): H x by central differences of the analytic
// gradient along x — taken on the log scale, v exp(±h x / v), so every variance stays positive
// (the symmetric second-order shift cancels in the difference: the product is exact to O(h²)) —
// and H x = g solved by conjugate gradients preconditioned with the average information
// (H = 2 AI - tr(P V_k P V_l), near AI where the fit is informative, so few steps are needed).
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import { evaluatePerTrial } from './perTrialResidualModel.js';
import { perTrialGradient } from './perTrialResidualDerivatives.js';
import type { InformationSolver } from './perTrialResidualSolve.js';

/** Relative change of the most-moved variance in a difference step. */
const STEP = 1e-4;

export interface HessianSolve {
  readonly x: Float64Array;
  readonly iterations: number;
  readonly converged: boolean;
}

/** x -> H x at (v, r) over the free terms and every residual (x zero on the terms held at zero). */
export function hessianProduct(d: CrossedData, L: CrossedLayout, v: Float64Array, r: Float64Array, freeTerm: readonly boolean[]): (x: Float64Array) => Float64Array | null {
  const nT = v.length;
  return (x: Float64Array) => {
    let worst = 0;
    for (let k = 0; k < nT; k++) if (freeTerm[k]) worst = Math.max(worst, Math.abs(x[k]) / v[k]);
    for (let i = 0; i < r.length; i++) worst = Math.max(worst, Math.abs(x[nT + i]) / r[i]);
    if (worst === 0) return new Float64Array(x.length);
    const h = STEP / worst;
    const at = (sign: number) => {
      const vv = Float64Array.from(v, (a, k) => (freeTerm[k] ? a * Math.exp((sign * h * x[k]) / a) : a));
      const rr = Float64Array.from(r, (a, i) => a * Math.exp((sign * h * x[nT + i]) / a));
      const ev = evaluatePerTrial(d, L, vv, rr);
      return ev ? perTrialGradient(d, L, ev) : null;
    };
    const plus = at(1);
    const minus = at(-1);
    if (!plus || !minus) return null;
    const out = new Float64Array(x.length);
    for (let i = 0; i < out.length; i++) out[i] = i < nT && !freeTerm[i] ? 0 : (plus[i] - minus[i]) / (2 * h);
    return out;
  };
}

/** H x = g by conjugate gradients preconditioned with AI^-1; null when H is not positive definite along the way. */
export function hessianSolve(product: (x: Float64Array) => Float64Array | null, ai: InformationSolver, g: Float64Array, o: { tolerance?: number; maxIterations?: number } = {}): HessianSolve | null {
  const n = g.length;
  const tolerance = o.tolerance ?? 1e-8;
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
