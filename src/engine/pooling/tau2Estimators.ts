// Between-trial variance tau² by DerSimonian–Laird (moments), Paule–Mandel (generalised Q
// equal to its df), ML and REML (Fisher scoring with step-halving on the log-likelihood,
// then a bracketed root of the score; tau² kept >= 0 and a zero-boundary estimate reported
// as such), or fixed at zero.
import { Matrix } from '../linalg/matrix.js';
import { isInterceptOnly, weightedFit, WeightedFit } from './weightedFit.js';
import { interceptLogLik, interceptTau2Root } from './interceptTau2.js';
import { brentRoot, decreasingRootFromZero } from './rootFinding.js';
import type { Tau2Method } from './types.js';

export interface Tau2Estimate {
  readonly tau2: number;
  readonly converged: boolean;
  readonly iterations: number;
  readonly atBoundary: boolean;
  readonly fit: WeightedFit;
}

/**
 * `start`: where ML/REML begin instead of the DL estimate (a nearby solution, e.g. the full pool's
 * tau² for a leave-one-out pool); the estimate is the same root either way, found sooner.
 */
export function estimateTau2(y: ArrayLike<number>, v: ArrayLike<number>, x: Matrix, method: Tau2Method, start?: number): Tau2Estimate {
  const warm = start !== undefined && Number.isFinite(start) && start >= 0;
  // a warm-started intercept-only pool needs neither the fixed-effect fit nor the DL start
  if (warm && (method === 'reml' || method === 'ml') && x.rows >= 2 && isInterceptOnly(x)) return interceptLikelihoodTau2(y, v, x, method === 'reml', start);
  const fe = weightedFit(y, v, x, 0);
  const dfResidual = x.rows - fe.rank;
  if (method === 'fixed' || dfResidual <= 0) return boundary(y, v, x, 0, 0, method === 'fixed' ? false : true);
  if (method === 'dl') {
    const t = dlTau2(x, fe, dfResidual);
    return { tau2: t, converged: true, iterations: 0, atBoundary: t === 0, fit: t === 0 ? fe : weightedFit(y, v, x, t) };
  }
  if (method === 'pm') {
    if (fe.weightedRss <= dfResidual) return boundary(y, v, x, 0, 0, true);
    const start = Math.max(dlTau2(x, fe, dfResidual), 1e-8);
    const root = decreasingRootFromZero((t) => weightedFit(y, v, x, t).weightedRss - dfResidual, start);
    if (root === null) throw new Error('Paule–Mandel: generalised Q did not fall to its df (estimates far too dispersed for their SEs)');
    return { tau2: root, converged: true, iterations: 0, atBoundary: false, fit: weightedFit(y, v, x, root) };
  }
  const from = warm ? start : dlTau2(x, fe, dfResidual);
  if (isInterceptOnly(x)) return interceptLikelihoodTau2(y, v, x, method === 'reml', from);
  return likelihoodTau2(y, v, x, method === 'reml', from);
}

/** The intercept-only pool: the same root by safeguarded Newton (interceptTau2.ts), with the same multimodality guard. */
function interceptLikelihoodTau2(y: ArrayLike<number>, v: ArrayLike<number>, x: Matrix, reml: boolean, start: number): Tau2Estimate {
  const root = interceptTau2Root(y, v, reml, start);
  if (!root.atBoundary && interceptLogLik(y, v, 0, reml) > interceptLogLik(y, v, root.tau2, reml))
    return { tau2: 0, converged: true, iterations: root.iterations, atBoundary: true, fit: weightedFit(y, v, x, 0) };
  return { tau2: root.tau2, converged: root.converged, iterations: root.iterations, atBoundary: root.atBoundary, fit: weightedFit(y, v, x, root.tau2) };
}

function boundary(y: ArrayLike<number>, v: ArrayLike<number>, x: Matrix, tau2: number, iterations: number, atBoundary: boolean): Tau2Estimate {
  return { tau2, converged: true, iterations, atBoundary, fit: weightedFit(y, v, x, tau2) };
}

/** DerSimonian–Laird, generalised to a design X: (Q_FE - (k - p)) / (tr W - tr((X'WX)^- X'W²X)). */
export function dlTau2(x: Matrix, fe: WeightedFit, dfResidual: number): number {
  const k = x.rows;
  const p = x.cols;
  let trW = 0;
  for (let i = 0; i < k; i++) trW += fe.weights[i];
  // tr(C X'W²X) = sum_i w_i² x_i' C x_i
  let trCorr = 0;
  for (let i = 0; i < k; i++) {
    let q = 0;
    for (let a = 0; a < p; a++)
      for (let b = 0; b < p; b++) q += x.data[i * p + a] * fe.covariance.data[a * p + b] * x.data[i * p + b];
    trCorr += fe.weights[i] * fe.weights[i] * q;
  }
  const denom = trW - trCorr;
  return Math.max(0, (fe.weightedRss - dfResidual) / denom);
}

/** Log-likelihood (ML) or restricted log-likelihood (REML) in tau², constants dropped. */
export function logLikTau2(v: ArrayLike<number>, fit: WeightedFit, reml: boolean): number {
  let s = 0;
  for (let i = 0; i < v.length; i++) s += Math.log(v[i] + fit.tau2);
  return -0.5 * (s + fit.weightedRss + (reml ? fit.logDetXtWX : 0));
}

interface ScoreInfo {
  score: number;
  information: number;
}

function scoreAndInformation(x: Matrix, fit: WeightedFit, reml: boolean): ScoreInfo {
  const k = x.rows;
  const w = fit.weights;
  let wr2 = 0; // y'PPy = sum w² r² since Py = W r
  for (let i = 0; i < k; i++) wr2 += w[i] * w[i] * fit.residuals[i] * fit.residuals[i];
  if (!reml) {
    let sw = 0;
    let sw2 = 0;
    for (let i = 0; i < k; i++) {
      sw += w[i];
      sw2 += w[i] * w[i];
    }
    return { score: 0.5 * (wr2 - sw), information: 0.5 * sw2 };
  }
  // tr(P) and tr(PP) for P = W - W X C X'W, C = (X'WX)^-, through p x p products only:
  // tr(P) = tr W - tr(C A2), tr(PP) = tr W² - 2 tr(C A3) + tr(C A2 C A2), Am = X'W^m X.
  const p = x.cols;
  const a2 = new Float64Array(p * p);
  const a3 = new Float64Array(p * p);
  let trW = 0;
  let trW2 = 0;
  for (let i = 0; i < k; i++) {
    const w2 = w[i] * w[i];
    trW += w[i];
    trW2 += w2;
    for (let a = 0; a < p; a++)
      for (let b = 0; b < p; b++) {
        const xx = x.data[i * p + a] * x.data[i * p + b];
        a2[a * p + b] += w2 * xx;
        a3[a * p + b] += w2 * w[i] * xx;
      }
  }
  const c = fit.covariance.data;
  const ca2 = new Float64Array(p * p);
  for (let a = 0; a < p; a++)
    for (let b = 0; b < p; b++) {
      let sum = 0;
      for (let m = 0; m < p; m++) sum += c[a * p + m] * a2[m * p + b];
      ca2[a * p + b] = sum;
    }
  let trCA2 = 0;
  let trCA3 = 0;
  let trCA2CA2 = 0;
  for (let a = 0; a < p; a++) {
    trCA2 += ca2[a * p + a];
    for (let m = 0; m < p; m++) {
      trCA3 += c[a * p + m] * a3[m * p + a];
      trCA2CA2 += ca2[a * p + m] * ca2[m * p + a];
    }
  }
  const trP = trW - trCA2;
  const trPP = trW2 - 2 * trCA3 + trCA2CA2;
  return { score: 0.5 * (wr2 - trP), information: 0.5 * trPP };
}

function likelihoodTau2(y: ArrayLike<number>, v: ArrayLike<number>, x: Matrix, reml: boolean, start: number): Tau2Estimate {
  const fisher = fisherScoring(y, v, x, reml, start);
  const score = (t: number) => scoreAndInformation(x, weightedFit(y, v, x, t), reml).score;
  // Polish: the maximum is a sign change of the score from + to -, found by bracketing and
  // Brent's method. This fixes the precision (Fisher scoring converges only linearly when
  // expected and observed information differ) and rescues the rare oscillating case.
  const t0 = fisher.fit.tau2;
  const s0 = score(t0);
  let lo = t0;
  let hi = t0;
  if (t0 === 0 && s0 <= 0) return { tau2: 0, converged: true, iterations: fisher.iterations, atBoundary: true, fit: fisher.fit };
  if (s0 > 0) {
    let step = Math.max(t0, 1e-6 * meanOf(v));
    hi = t0 + step;
    for (let j = 0; score(hi) > 0; j++) {
      if (j > 2000) return { ...fisher, converged: false };
      lo = hi;
      step *= 2;
      hi = t0 + step;
    }
  } else {
    lo = t0 / 2;
    for (let j = 0; score(lo) <= 0; j++) {
      hi = lo;
      lo = j < 80 ? lo / 2 : 0;
      if (lo === 0) break;
    }
    if (lo === 0 && score(0) <= 0) return boundaryAtZero(y, v, x, fisher.iterations);
  }
  const root = lo === hi ? lo : brentRoot(score, lo, hi, { xTol: 1e-14 * hi });
  const fit = weightedFit(y, v, x, root);
  // A boundary maximum can beat an interior stationary point only if the likelihood is multimodal.
  const atZero = weightedFit(y, v, x, 0);
  if (logLikTau2(v, atZero, reml) > logLikTau2(v, fit, reml)) return { tau2: 0, converged: true, iterations: fisher.iterations, atBoundary: true, fit: atZero };
  return { tau2: root, converged: true, iterations: fisher.iterations, atBoundary: root === 0, fit };
}

function boundaryAtZero(y: ArrayLike<number>, v: ArrayLike<number>, x: Matrix, iterations: number): Tau2Estimate {
  return { tau2: 0, converged: true, iterations, atBoundary: true, fit: weightedFit(y, v, x, 0) };
}

function meanOf(v: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < v.length; i++) s += v[i];
  return s / v.length;
}

/** Fisher scoring with step-halving on the (restricted) log-likelihood, tau² kept >= 0. */
function fisherScoring(y: ArrayLike<number>, v: ArrayLike<number>, x: Matrix, reml: boolean, start: number): Tau2Estimate {
  let fit = weightedFit(y, v, x, start);
  let ll = logLikTau2(v, fit, reml);
  const maxIterations = 50;
  const scale = meanOf(v);
  for (let it = 1; it <= maxIterations; it++) {
    const { score, information } = scoreAndInformation(x, fit, reml);
    if (fit.tau2 === 0 && score <= 0) return { tau2: 0, converged: true, iterations: it, atBoundary: true, fit };
    let step = score / information;
    let accepted = false;
    let candidate = fit;
    let candidateLl = ll;
    for (let halving = 0; halving < 60 && !accepted; halving++) {
      candidate = weightedFit(y, v, x, Math.max(0, fit.tau2 + step));
      candidateLl = logLikTau2(v, candidate, reml);
      accepted = candidateLl >= ll - 1e-12 * Math.abs(ll);
      if (!accepted) step /= 2;
    }
    if (!accepted) return { tau2: fit.tau2, converged: false, iterations: it, atBoundary: fit.tau2 === 0, fit };
    const change = Math.abs(candidate.tau2 - fit.tau2);
    fit = candidate;
    ll = candidateLl;
    if (change <= 1e-10 * (fit.tau2 + 1e-6 * scale)) return { tau2: fit.tau2, converged: true, iterations: it, atBoundary: fit.tau2 === 0, fit };
  }
  return { tau2: fit.tau2, converged: false, iterations: maxIterations, atBoundary: fit.tau2 === 0, fit };
}
