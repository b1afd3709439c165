// One point of a variance's profile likelihood by Newton steps: the -2 REML log-likelihood
// minimised over the residual variance and the other variances with term k's variance held at v.
// In psi = (log sigma², log sigma_j² for the other terms away from zero) the constraint is a
// coordinate held fixed, the gradient and the exact observed information come analytically
// (crossedDerivatives.ts, observedInformation.ts: in phi = (log sigma², log gamma_j) and mapped by
// phi_j = psi_j - psi_0), each step halved until the criterion falls. Returns null — and the caller
// takes its derivative-free search instead — when the Hessian is not positive definite, a step
// cannot lower the criterion, or a term held at zero would rather leave it. Far from the point
// the Hessian may be indefinite: a ridge is then added until it is not (a damped Newton step).
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import { evaluateCrossed, unprofiledCriterion, type CrossedEvaluation } from './crossedLikelihood.js';
import { crossedDerivatives } from './crossedDerivatives.js';
import { observedInformation } from './observedInformation.js';
import { solveSymmetric } from './denseSmall.js';

export interface ProfilePoint {
  readonly value: number;
  readonly sigma2: number;
  /** Relative sds of all terms (term k's included) at the point. */
  readonly theta: Float64Array;
}

/**
 * Minimum of the criterion with term k's variance at v, from (sigma2, theta) (theta[k] ignored);
 * terms j != k with theta[j] <= atZero stay at zero.
 */
export function profileNewton(d: CrossedData, L: CrossedLayout, k: number, v: number, sigma2: number, theta: ArrayLike<number>, atZero: number, signal?: AbortSignal): ProfilePoint | null {
  const nT = L.terms.length;
  const N = d.nObservations;
  const free = L.terms.map((_, j) => j).filter((j) => j !== k && theta[j] > atZero);
  const n = 1 + free.length;
  let psi = Float64Array.from([Math.log(sigma2), ...free.map((j) => Math.log(sigma2 * theta[j] ** 2))]);
  interface Point {
    readonly ev: CrossedEvaluation;
    readonly value: number;
    readonly th: Float64Array;
  }
  const at = (x: Float64Array): Point | null => {
    if (signal?.aborted) throw new Error('one-stage fit cancelled');
    const s2 = Math.exp(x[0]);
    const th = new Float64Array(nT);
    free.forEach((j, i) => (th[j] = Math.sqrt(Math.exp(x[1 + i]) / s2)));
    th[k] = Math.sqrt(v / s2);
    const ev = evaluateCrossed(d, L, th);
    return ev ? { ev, value: unprofiledCriterion(ev, s2, N, L.p), th } : null;
  };
  const start = at(psi);
  if (!start) return null;
  let cur: Point = start;
  for (let iter = 0; iter < 30; iter++) {
    const s2 = Math.exp(psi[0]);
    const { ev } = cur;
    const der = crossedDerivatives(d, L, ev);
    // terms held at zero must not want to leave it (their gradient in gamma is >= 0)
    for (let j = 0; j < nT; j++) if (j !== k && !free.includes(j) && der.trace[j] - der.quadratic[j] / s2 < -1e-8 * N) return null;
    const info = observedInformation(d, L, ev, der, [], s2);
    // phi-space gradient and Hessian over (log sigma², the free terms, term k)
    const tied = [...free, k];
    const gPhi = new Float64Array(n + 1);
    const hPhi = new Float64Array((n + 1) * (n + 1));
    gPhi[0] = N - L.p - ev.rHr / s2;
    hPhi[0] = ev.rHr / s2;
    tied.forEach((j, a) => {
      const gj = ev.theta[j] ** 2;
      gPhi[1 + a] = gj * (der.trace[j] - der.quadratic[j] / s2);
      hPhi[1 + a] = hPhi[(1 + a) * (n + 1)] = (gj * der.quadratic[j]) / s2;
      tied.forEach((l, b) => (hPhi[(1 + a) * (n + 1) + 1 + b] = info.hessian[j * nT + l]));
    });
    // psi: phi_0 = psi_0, phi_j = psi_j - psi_0 (term k's psi fixed: its phi moves with psi_0 only)
    const g = new Float64Array(n);
    const H = new Float64Array(n * n);
    const m = n + 1;
    const jac = (row: number, col: number): number => (row === col && col < n ? 1 : col === 0 && row > 0 ? -1 : 0);
    for (let a = 0; a < n; a++) {
      for (let i = 0; i < m; i++) g[a] += jac(i, a) * gPhi[i];
      for (let b = 0; b < n; b++) {
        let s = 0;
        for (let i = 0; i < m; i++) {
          const ja = jac(i, a);
          if (ja === 0) continue;
          for (let l = 0; l < m; l++) {
            const jb = jac(l, b);
            if (jb !== 0) s += ja * hPhi[i * m + l] * jb;
          }
        }
        H[a * n + b] = s;
      }
    }
    const step = dampedSolve(H, g, n);
    if (!step) return null;
    let decrement = 0;
    for (let a = 0; a < n; a++) decrement += g[a] * step[a];
    if (!(decrement >= 0)) return null;
    // a minimum only where the Hessian itself is positive definite
    if (decrement < 1e-10 && undamped(H, n)) return { value: cur.value, sigma2: s2, theta: cur.th };
    let t = 1;
    let next: Point | null = null;
    let moved = psi;
    while (t >= 1 / 64) {
      moved = psi.map((x, a) => x - t * Math.max(-3, Math.min(3, step[a])));
      const tried = at(moved);
      if (tried && tried.value < cur.value) {
        next = tried;
        break;
      }
      t /= 2;
    }
    if (!next) return decrement < 1e-6 && undamped(H, n) ? { value: cur.value, sigma2: s2, theta: cur.th } : null;
    psi = moved;
    cur = next;
  }
  return null;
}

function undamped(H: Float64Array, n: number): boolean {
  return solveSymmetric(H, new Float64Array(n), n) !== null;
}

/** Solve H s = g; while H is not positive definite, with a growing ridge on its diagonal. */
function dampedSolve(H: Float64Array, g: Float64Array, n: number): Float64Array | null {
  let scale = 0;
  for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(H[i * n + i]));
  if (!(scale > 0)) return null;
  for (let ridge = 0; ridge <= 1e4; ridge = ridge === 0 ? 1e-8 : ridge * 10) {
    const m = Float64Array.from(H);
    for (let i = 0; i < n; i++) m[i * n + i] += ridge * scale;
    const s = solveSymmetric(m, g, n);
    if (s) return s;
  }
  return null;
}
