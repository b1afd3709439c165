// Satterthwaite df and the variances' SEs from the analytic observed information
// (observedInformation.ts) instead of differences of the gradient: the same quantities as
// crossedInference.ts satterthwaite() — lmerTest's df = 2 v² / g'A g, A = 2 H^-1, H the Hessian of
// -2 REML log-likelihood in (log sigma², log sigma_k²), g the contrast variance's gradient there —
// with no refactoring at shifted parameters. In phi = (log sigma², log gamma_k),
//   d²F/dphi_0² = r'H^-1r / sigma²,  d²F/dphi_0 dphi_k = gamma_k |Z_k'Py|² / sigma²,
// and the ratios' block is the observed information; the map to psi = (log sigma², log sigma_k²)
// is linear (phi_k = psi_k - psi_0), so H_psi = J' H_phi J exactly.
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import type { CrossedEvaluation } from './crossedLikelihood.js';
import { crossedDerivatives, type CrossedDerivatives } from './crossedDerivatives.js';
import { observedInformation } from './observedInformation.js';
import { AT_ZERO, type SatterthwaiteResult } from './crossedInference.js';
import { solveSymmetric } from './denseSmall.js';

/** The derivatives at ev are reused when given (the AI-REML search's last pass at the optimum). */
export function satterthwaiteObserved(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, ls: readonly Float64Array[], atOptimum: CrossedDerivatives | null = null): SatterthwaiteResult {
  const none: SatterthwaiteResult = { df: ls.map(() => null), varianceSe: L.terms.map(() => null), residualSe: null };
  const free = L.terms.map((_, k) => k).filter((k) => ev.theta[k] > AT_ZERO);
  const nT = L.terms.length;
  const m = 1 + free.length;
  const s2 = ev.sigma2;
  const der = atOptimum ?? crossedDerivatives(d, L, ev);
  const info = observedInformation(d, L, ev, der, ls);
  const Hphi = new Float64Array(m * m);
  Hphi[0] = ev.rHr / s2;
  free.forEach((k, i) => {
    Hphi[1 + i] = Hphi[(1 + i) * m] = (ev.theta[k] ** 2 * der.quadratic[k]) / s2;
    free.forEach((l, j) => (Hphi[(1 + i) * m + 1 + j] = info.hessian[k * nT + l]));
  });
  // contrast variances sigma² c and their gradients in phi
  const p = L.p;
  const centre = ls.map((l) => {
    let v = 0;
    for (let i = 0; i < p; i++) {
      if (l[i] === 0) continue;
      for (let j = 0; j < p; j++) v += l[i] * ev.xhxInverse[i * p + j] * l[j];
    }
    return v;
  });
  const gradPhi = ls.map((_, c) => {
    const g = new Float64Array(m);
    g[0] = s2 * centre[c];
    free.forEach((k, i) => (g[1 + i] = s2 * info.contrastGradient[c][k]));
    return g;
  });
  if (!Hphi.every(Number.isFinite)) return none;
  // J = dphi/dpsi: identity with -1 down the first column below the top
  const H = new Float64Array(m * m);
  const Jcol = (row: number, col: number) => (row === col ? 1 : col === 0 && row > 0 ? -1 : 0);
  for (let a = 0; a < m; a++)
    for (let b = 0; b < m; b++) {
      let v = 0;
      for (let i = 0; i < m; i++) {
        const ja = Jcol(i, a);
        if (ja === 0) continue;
        for (let j = 0; j < m; j++) {
          const jb = Jcol(j, b);
          if (jb !== 0) v += ja * Hphi[i * m + j] * jb;
        }
      }
      H[a * m + b] = v;
    }
  const grads = gradPhi.map((gp) => {
    const g = new Float64Array(m);
    for (let a = 0; a < m; a++) for (let i = 0; i < m; i++) g[a] += Jcol(i, a) * gp[i];
    return g;
  });
  const df = grads.map((g, c) => {
    const hg = solveSymmetric(H, g, m);
    if (!hg) return null;
    let gAg = 0;
    for (let i = 0; i < m; i++) gAg += 2 * g[i] * hg[i];
    const v = s2 * centre[c];
    return gAg > 0 ? (2 * v * v) / gAg : null;
  });
  // var(log v_i) = A_ii = 2 (H^-1)_ii, so se(v_i) = v_i sqrt(A_ii)
  const logVarSe = (i: number): number | null => {
    const e = new Float64Array(m);
    e[i] = 1;
    const x = solveSymmetric(H, e, m);
    return x && x[i] > 0 ? Math.sqrt(2 * x[i]) : null;
  };
  const varianceSe = L.terms.map((_, k) => {
    const i = free.indexOf(k);
    const s = i < 0 ? null : logVarSe(1 + i);
    return s === null ? null : s * ev.sigma2 * ev.theta[k] ** 2;
  });
  const r = logVarSe(0);
  return { df, varianceSe, residualSe: r === null ? null : r * ev.sigma2 };
}
