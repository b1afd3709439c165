// Solving AI x = g for the per-trial-residual crossed model without forming AI (one row per trial:
// thousands at network scale). Preconditioned conjugate gradients on the applications of
// perTrialDerivatives.ts; the preconditioner keeps the part of AI that matters most exactly —
// the terms' block and the terms' coupling with each residual (one application per term) — and
// of the residual-residual block only its diagonal (two trials' residuals meet only through the
// shared effects their trials have in common, a small coupling):
//   M = [T U'; U D],  M^-1 [a; b]: x = S^-1 (a - U'D^-1 b), y = D^-1 (b - U x), S = T - U'D^-1 U.
import type { PerTrialDerivatives } from './perTrialResidualDerivatives.js';
import { solveSymmetric } from './denseSmall.js';

export interface InformationSolve {
  readonly x: Float64Array;
  readonly iterations: number;
  readonly converged: boolean;
}

export interface InformationSolver {
  /** AI x = g over the free parameters (x is zero on the others). */
  readonly solve: (g: Float64Array) => InformationSolve;
  /** M^-1 g, the preconditioner's approximate solve. */
  readonly approximate: (g: Float64Array) => Float64Array;
}

/** freeTerm[k]: term k moves; every residual moves. */
export function informationSolver(der: PerTrialDerivatives, nT: number, freeTerm: readonly boolean[], o: { tolerance?: number; maxIterations?: number } = {}): InformationSolver {
  const nAll = der.gradient.length;
  const nTr = nAll - nT;
  const terms = Array.from({ length: nT }, (_, k) => k).filter((k) => freeTerm[k]);
  const nF = terms.length;
  const mask = (v: Float64Array): Float64Array => {
    for (let k = 0; k < nT; k++) if (!freeTerm[k]) v[k] = 0;
    return v;
  };
  const apply = (v: Float64Array) => mask(der.apply(mask(v)));
  const cols = terms.map((k) => {
    const e = new Float64Array(nAll);
    e[k] = 1;
    return apply(e);
  });
  const D = Float64Array.from(der.residualDiagonal, (x) => (x > 0 ? x : 1e-300));
  const S = new Float64Array(nF * nF);
  for (let a = 0; a < nF; a++)
    for (let b = 0; b < nF; b++) {
      let s = cols[a][terms[b]];
      for (let i = 0; i < nTr; i++) s -= (cols[a][nT + i] * cols[b][nT + i]) / D[i];
      S[a * nF + b] = s;
    }
  // S is not positive definite only when the terms' block alone fails: then the diagonal of T
  const sUsable = nF === 0 || solveSymmetric(S, new Float64Array(nF), nF) !== null;
  const approximate = (b: Float64Array): Float64Array => {
    const out = new Float64Array(nAll);
    if (nF > 0) {
      const rhs = new Float64Array(nF);
      for (let a = 0; a < nF; a++) {
        let s = b[terms[a]];
        if (sUsable) for (let i = 0; i < nTr; i++) s -= (cols[a][nT + i] * b[nT + i]) / D[i];
        rhs[a] = s;
      }
      const x = sUsable ? solveSymmetric(S, rhs, nF)! : rhs.map((v, a) => v / Math.max(cols[a][terms[a]], 1e-300));
      terms.forEach((k, a) => (out[k] = x[a]));
      for (let i = 0; i < nTr; i++) {
        let s = b[nT + i];
        if (sUsable) for (let a = 0; a < nF; a++) s -= cols[a][nT + i] * x[a];
        out[nT + i] = s / D[i];
      }
    } else for (let i = 0; i < nTr; i++) out[nT + i] = b[nT + i] / D[i];
    return out;
  };
  const tolerance = o.tolerance ?? 1e-11;
  const maxIterations = o.maxIterations ?? Math.min(nAll, 400);
  const solve = (gIn: Float64Array): InformationSolve => {
    const g = mask(Float64Array.from(gIn));
    const x = new Float64Array(nAll);
    const r = Float64Array.from(g);
    let z = approximate(r);
    const p = Float64Array.from(z);
    let rz = dot(r, z);
    const norm0 = Math.sqrt(dot(g, g));
    if (norm0 === 0) return { x, iterations: 0, converged: true };
    for (let it = 1; it <= maxIterations; it++) {
      const ap = apply(Float64Array.from(p));
      const pap = dot(p, ap);
      if (!(pap > 0)) return { x, iterations: it, converged: false };
      const alpha = rz / pap;
      for (let i = 0; i < nAll; i++) {
        x[i] += alpha * p[i];
        r[i] -= alpha * ap[i];
      }
      if (Math.sqrt(dot(r, r)) <= tolerance * norm0) return { x, iterations: it, converged: true };
      z = approximate(r);
      const rzNew = dot(r, z);
      const beta = rzNew / rz;
      rz = rzNew;
      for (let i = 0; i < nAll; i++) p[i] = z[i] + beta * p[i];
    }
    return { x, iterations: maxIterations, converged: false };
  };
  return { solve, approximate };
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}
