// Second-order quantities at the REML estimate, for standard errors and small-sample df:
//   P_k   = X'V^-1 V_k V^-1 X                       (p x p; -dC^-1/dtheta_k)
//   Q_kl  = X'V^-1 V_k V^-1 V_l V^-1 X              (p x p)
//   E_kl  = tr(P V_k P V_l)                          expected information of -2 logLik (x2)
//   O_kl  = 2 y'P V_k P V_l P y - tr(P V_k P V_l)   observed Hessian of -2 logLik
// with tr(P V_k P V_l) = tr(V^-1 V_k V^-1 V_l) - 2 tr(C Q_kl) + tr(C P_k C P_l). The first two
// terms are sums over the small blocks; they depend on the design only, so each design pattern
// is visited once and weighted by its number of trials (trials of spectral groups through their
// layout's decomposition, spectralSecondOrder.ts); Q_kl is only ever held per pattern (for
// Kenward–Roger; E takes its traces without forming it). The last term is kept as a low-rank
// factor, so with one residual per trial E never needs forming (informationSolver.ts).
import { assertComplete, type Evaluation, type ModelFrame } from './remlCriterion.js';
import type { ScoreAndInformation } from './remlDerivatives.js';
import { ensurePatternH2 } from './trialBlock.js';
import type { ActiveParameter } from './trialParameters.js';
import { f64, Scratch } from './arena.js';
import { choleskyInPlace } from '../linalg/inPlace.js';
import { SymmetricArrowhead } from './arrowhead.js';
import type { KenwardRogerWeights } from './kenwardRogerWeights.js';
import { spectralExpected } from './spectralSecondOrder.js';
import { gatherDot, rowsDot } from '../linalg/gatherDot.js';

export interface SecondOrder {
  /** P_k for each parameter, p x p. */
  readonly p: Float64Array[];
  /** The per-block part of E: tr(V^-1 V_k V^-1 V_l) - 2 tr(C Q_kl) (an arrowhead with one residual per trial). */
  readonly blockExpected: SymmetricArrowhead;
  /** U (nP x uCols) with tr(C P_k C P_l) = U_k . U_l: the vech of L'P_k L (C = L L', off-diagonal entries times sqrt 2). */
  readonly u: Float64Array;
  readonly uCols: number;
  /** E = blockExpected + U U', and the observed O = 2 AI - E (dense nP x nP, formed on first use). */
  readonly expected: Float64Array;
  readonly observed: Float64Array;
}

class SecondOrderTerms implements SecondOrder {
  private denseExpected: Float64Array | null = null;
  private denseObserved: Float64Array | null = null;
  constructor(
    readonly p: Float64Array[],
    readonly blockExpected: SymmetricArrowhead,
    readonly u: Float64Array,
    readonly uCols: number,
    private readonly score: ScoreAndInformation,
  ) {}

  get expected(): Float64Array {
    if (!this.denseExpected) {
      const nP = this.p.length;
      const q = this.uCols;
      const e = this.blockExpected.toDense();
      for (let k = 0; k < nP; k++)
        for (let l = k; l < nP; l++) {
          let s = 0;
          for (let a = 0; a < q; a++) s += this.u[k * q + a] * this.u[l * q + a];
          e[k * nP + l] += s;
          if (l !== k) e[l * nP + k] += s;
        }
      this.denseExpected = e;
    }
    return this.denseExpected;
  }

  get observed(): Float64Array {
    if (!this.denseObserved) {
      const e = this.expected;
      const ai = this.score.ai; // a getter: read once, not per entry
      const o = new Float64Array(e.length);
      for (let j = 0; j < e.length; j++) o[j] = 2 * ai[j] - e[j];
      this.denseObserved = o;
    }
    return this.denseObserved;
  }
}

type Small = { rows: number; cols: number; data: Float64Array };

function sub(a: Float64Array, m: number, rows: ArrayLike<number>, cols: ArrayLike<number>): Small {
  const out = f64(rows.length * cols.length);
  for (let i = 0; i < rows.length; i++) for (let j = 0; j < cols.length; j++) out[i * cols.length + j] = a[rows[i] * m + cols[j]];
  return { rows: rows.length, cols: cols.length, data: out };
}

function mul(a: Small, b: Small): Small {
  const out = f64(a.rows * b.cols);
  for (let i = 0; i < a.rows; i++)
    for (let k = 0; k < a.cols; k++) {
      const v = a.data[i * a.cols + k];
      if (v === 0) continue;
      for (let j = 0; j < b.cols; j++) out[i * b.cols + j] += v * b.data[k * b.cols + j];
    }
  return { rows: a.rows, cols: b.cols, data: out };
}

/** Design-only pieces of one pattern (every trial of the pattern has the same ones), for Kenward–Roger. */
interface PatternForms {
  /** Q_kl restricted to the pattern's treatments, for an active pair (k, l) in that order. */
  readonly q: (a: ActiveParameter, b: ActiveParameter) => Small;
}

function patternForms(frame: ModelFrame, ev: Evaluation, q: number, act: readonly ActiveParameter[]): PatternForms {
  const t = frame.stats.trials[frame.patternTrial[q]];
  const pat = ev.patterns[q];
  const mz = t.m - 1;
  const T = t.fixedColumns;
  const H = pat.hzz;
  const H2 = ensurePatternH2(pat, mz);
  let H3: Small | null = null;
  const third = (): Small => {
    // B'V^-3 B on the treatment block: (H2_TT - gz_T. H2_RT) / sigma2
    const R = pat.randomColumns;
    const r = R.length;
    const nt = T.length;
    const out = f64(nt * nt);
    for (let x = 0; x < nt; x++)
      for (let y = 0; y < nt; y++) {
        let v = H2[T[x] * mz + T[y]];
        for (let b = 0; b < r; b++) v -= pat.gz[T[x] * r + b] * H2[R[b] * mz + T[y]];
        out[x * nt + y] = v / pat.sigma2;
      }
    return { rows: nt, cols: nt, data: out };
  };
  const qf = (a: ActiveParameter, b: ActiveParameter): Small => {
    if (a.columns && b.columns) return mul(mul(sub(H, mz, T, a.columns), sub(H, mz, a.columns, b.columns)), sub(H, mz, b.columns, T));
    if (a.columns) return mul(sub(H, mz, T, a.columns), sub(H2, mz, a.columns, T));
    if (b.columns) return mul(sub(H2, mz, T, b.columns), sub(H, mz, b.columns, T));
    H3 ??= third();
    return H3;
  };
  return { q: qf };
}

// Working arrays of patternExpected, reused from pattern to pattern.
const clScratch = new Scratch();
const wScratch = new Scratch();
const rcScratch = new Scratch();
const d2Scratch = new Scratch();

/**
 * One pattern's part of P_k and of E_kl = tr(V^-1 V_k V^-1 V_l) - 2 tr(C Q_kl) (the tr(C P_k C P_l)
 * part is added for the whole network afterwards), times its number of trials. The traces
 * tr(C Q_kl) are taken without forming Q_kl: with W = C_TT H_TR and RC = H_RT W,
 *   term-term      tr(C H_TA H_AB H_BT) = sum_{x in A, y in B} H_xy RC_yx
 *   term-residual  tr(C H_TA H2_AT)     = sum_{x in A} (H2_xT W)_x
 *   residual pair  tr(C H3_TT),          H3 = B'V^-3 B
 * (T treatment columns, R random columns, H = B'V^-1 B, H2 = B'V^-2 B on the design columns).
 */
function patternExpected(frame: ModelFrame, ev: Evaluation, q: number, act: readonly ActiveParameter[], P: Float64Array[], expected: SymmetricArrowhead): void {
  const t = frame.stats.trials[frame.patternTrial[q]];
  const pat = ev.patterns[q];
  const count = frame.patternCount[q];
  const p = frame.stats.fixed.length;
  const nP = frame.layout.parameters.length;
  const mz = t.m - 1;
  const T = t.fixedColumns;
  const tg = t.fixedIndex;
  const nt = T.length;
  const R = pat.randomColumns;
  const r = R.length;
  const H = pat.hzz;
  const H2 = ensurePatternH2(pat, mz);
  const cl = clScratch.get(nt * nt);
  for (let a = 0; a < nt; a++) for (let b = 0; b < nt; b++) cl[a * nt + b] = ev.c[tg[a] * p + tg[b]];
  // P_k on this pattern's treatments (H, H2 symmetric: rows stand in for columns)
  for (let ia = 0; ia < act.length; ia++) {
    const a = act[ia];
    const target = P[a.index];
    for (let x = 0; x < nt; x++)
      for (let y = 0; y < nt; y++) target[tg[x] * p + tg[y]] += count * (a.columns ? rowsDot(H, T[x] * mz, T[y] * mz, a.columns) : H2[T[x] * mz + T[y]]);
  }
  // W = C_TT H_TR (nt x r) and RC = H_RT W (r x r), by position in R; d2 = diag(H2_RT W)
  const w = wScratch.get(nt * r);
  for (let x = 0; x < nt; x++) for (let b = 0; b < r; b++) w[x * r + b] = gatherDot(H, R[b] * mz, T, cl, x * nt, 1);
  const rc = rcScratch.get(r * r);
  for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) rc[a * r + b] = gatherDot(H, R[a] * mz, T, w, b, r);
  const d2 = d2Scratch.get(r);
  for (let b = 0; b < r; b++) d2[b] = gatherDot(H2, R[b] * mz, T, w, b, r);
  const positionInR = positionScratch(mz, R);
  for (let ia = 0; ia < act.length; ia++)
    for (let ib = ia; ib < act.length; ib++) {
      const A = act[ia];
      const B = act[ib];
      let trVV = 0;
      let trCQ = 0;
      if (A.columns && B.columns) {
        for (const xc of A.columns)
          for (const yc of B.columns) {
            const h = H[xc * mz + yc];
            trVV += h * h;
            trCQ += h * rc[positionInR[yc] * r + positionInR[xc]];
          }
      } else if (A.columns || B.columns) {
        for (const zc of (A.columns ?? B.columns)!) {
          trVV += H2[zc * mz + zc];
          trCQ += d2[positionInR[zc]];
        }
      } else {
        trVV = (t.n - 2 * pat.trWK + pat.trWKWK) / (pat.sigma2 * pat.sigma2);
        // tr(C H3) with H3_yx = (H2_yx - gz_y. H2_Rx) / sigma2 on the treatment columns
        for (let x = 0; x < nt; x++)
          for (let y = 0; y < nt; y++) trCQ += (cl[x * nt + y] * (H2[T[y] * mz + T[x]] - gatherDot(H2, T[x] * mz, R, pat.gz, T[y] * r, 1))) / pat.sigma2;
      }
      const v = count * (trVV - 2 * trCQ);
      expected.addSymmetric(A.index, B.index, v);
    }
}

let positions = new Int32Array(64);
/** Position of each random design column in R (other entries undefined). */
function positionScratch(mz: number, R: Int32Array): Int32Array {
  if (positions.length < mz) positions = new Int32Array(2 * mz);
  for (let b = 0; b < R.length; b++) positions[R[b]] = b;
  return positions;
}

export function secondOrder(frame: ModelFrame, ev: Evaluation, score: ScoreAndInformation, active: readonly ActiveParameter[][]): SecondOrder {
  const nP = frame.layout.parameters.length;
  const p = frame.stats.fixed.length;
  const P = Array.from({ length: nP }, () => new Float64Array(p * p));
  const expected = new SymmetricArrowhead(nP, frame.sharedParameters);
  const skip = ev.spectral ? frame.spectralPattern : null;
  for (let q = 0; q < frame.patternTrial.length; q++) if (!(skip && skip[q])) patternExpected(frame, ev, q, active[frame.patternTrial[q]], P, expected);
  if (ev.spectral) for (let g = 0; g < frame.spectral.length; g++) spectralExpected(frame, ev, g, P, expected);
  const uCols = (p * (p + 1)) / 2;
  return new SecondOrderTerms(P, expected, traceFactor(P, ev.c, p, uCols), uCols, score);
}

/** U with U_k . U_l = tr(C P_k C P_l): the vech of S_k = L'P_k L (C = L L'), off-diagonal entries times sqrt 2. */
function traceFactor(P: readonly Float64Array[], c: Float64Array, p: number, uCols: number): Float64Array {
  const l = Float64Array.from(c);
  choleskyInPlace(l, p); // C is the inverse of a positive definite X'V^-1 X
  for (let a = 0; a < p; a++) for (let b = a + 1; b < p; b++) l[a * p + b] = 0;
  const u = new Float64Array(P.length * uCols);
  const pl = new Float64Array(p * p);
  for (let k = 0; k < P.length; k++) vechOfCongruence(P[k], l, p, pl, u, k * uCols);
  return u;
}

/** u[o ...] = vech(L'P L) with off-diagonal entries times sqrt 2; pl is scratch. */
function vechOfCongruence(pk: Float64Array, l: Float64Array, p: number, pl: Float64Array, u: Float64Array, o: number): void {
  // pl = P L (L lower triangular: column b has entries from row b down)
  for (let i = 0; i < p; i++)
    for (let b = 0; b < p; b++) {
      let s = 0;
      for (let j = b; j < p; j++) s += pk[i * p + j] * l[j * p + b];
      pl[i * p + b] = s;
    }
  let at = o;
  for (let a = 0; a < p; a++)
    for (let b = a; b < p; b++) {
      let s = 0;
      for (let i = a; i < p; i++) s += l[i * p + a] * pl[i * p + b];
      u[at++] = a === b ? s : Math.SQRT2 * s;
    }
}

/**
 * Kenward–Roger bias correction term U = sum_kl W_kl (Q_kl - P_k C P_l) (p x p), where W is the
 * asymptotic covariance of the variance parameters (as pbkrtest's vcovAdj builds it).
 */
export function kenwardRogerU(frame: ModelFrame, ev: Evaluation, so: SecondOrder, w: KenwardRogerWeights, active: readonly ActiveParameter[][]): Float64Array {
  assertComplete(ev, 'kenwardRogerU');
  const nP = frame.layout.parameters.length;
  const p = frame.stats.fixed.length;
  const u = new Float64Array(p * p);
  // sum_kl W_kl Q_kl: Q_kl is nonzero only for parameters acting in one trial block
  for (let qi = 0; qi < frame.patternTrial.length; qi++) {
    const i0 = frame.patternTrial[qi];
    const count = frame.patternCount[qi];
    const tg = frame.stats.trials[i0].fixedIndex;
    const act = active[i0];
    const f = patternForms(frame, ev, qi, act);
    for (const a of act)
      for (const b of act) {
        const wab = w.entry(a.index, b.index);
        if (wab === 0) continue;
        const q = f.q(a, b);
        for (let x = 0; x < tg.length; x++) for (let y = 0; y < tg.length; y++) u[tg[x] * p + tg[y]] += count * wab * q.data[x * tg.length + y];
      }
  }
  // - sum_kl W_kl P_k C P_l = - sum_k P_k C (sum_l W_kl P_l): W applied to the stacked P_l
  const pp = p * p;
  const stacked = new Float64Array(nP * pp);
  for (let k = 0; k < nP; k++) stacked.set(so.p[k], k * pp);
  const wp = w.apply(stacked, pp);
  for (let k = 0; k < nP; k++) {
    const mix = wp.subarray(k * pp, (k + 1) * pp);
    let any = false;
    for (let j = 0; j < pp; j++) if (mix[j] !== 0) any = true;
    if (!any) continue;
    const pcm = matMul(so.p[k], matMul(ev.c, mix, p), p);
    for (let j = 0; j < pp; j++) u[j] -= pcm[j];
  }
  return u;
}

export function matMul(a: Float64Array, b: Float64Array, n: number): Float64Array {
  const out = new Float64Array(n * n);
  for (let i = 0; i < n; i++)
    for (let k = 0; k < n; k++) {
      const v = a[i * n + k];
      if (v === 0) continue;
      for (let j = 0; j < n; j++) out[i * n + j] += v * b[k * n + j];
    }
  return out;
}
