// Score and average-information matrix of the REML criterion (-2 logLik_REML) with respect to
// the variance parameters, from the per-trial blocks (Gilmour, Thompson & Cullis 1995):
//   d/dtheta_k  = tr(P V_k) - y'P V_k P y
//   AI_kl       = y'P V_k P V_l P y
// with P = V^-1 - V^-1 X C X'V^-1, C = (X'V^-1 X)^-1, V_k = Z_k Z_k' or I. Everything is a
// bilinear form on B: P y = V^-1 r, r = B rho with rho = (-beta on the treatment columns, 1 on y).
// The trace terms depend on the design only, so they are computed once per design pattern;
// the data enter through each pattern's moments (patternMoments.ts), so an iteration costs
// O(patterns), not O(trials) — for networks of identically laid-out trials, O(1). Trials laid
// out alike but with residual variances of their own go through their layout's decomposition
// instead (spectralDerivatives.ts), O(r^2) each.
import type { Evaluation, ModelFrame } from './remlCriterion.js';
import { ensurePatternH2, type PatternState } from './trialBlock.js';
import { localBlock, type ActiveParameter } from './trialParameters.js';
import { spectralScore } from './spectralDerivatives.js';
import { SymmetricArrowhead } from './arrowhead.js';

export interface ScoreAndInformation {
  readonly gradient: Float64Array;
  /** Average information, nParameters x nParameters, row-major. */
  readonly ai: Float64Array;
  /** y'P V_k P y and tr(P V_k), kept for the EM update. */
  readonly quadratic: Float64Array;
  readonly trace: Float64Array;
  /** v_k = X'V^-1 V_k V^-1 r, nParameters x p: ai = a0 - V C V'. */
  readonly v: Float64Array;
  /** The sum of the per-block terms of the AI matrix (all zero without information). */
  readonly a0: SymmetricArrowhead;
  /** One entry of the AI matrix, without forming it. */
  informationEntry(k: number, l: number): number;
  /**
   * With one residual per trial, for each residual parameter (filled with the information):
   * tr(V_i^-2) - 2 tr(C X_i'V_i^-3 X_i), the expected information E_kk less its tr(C P_k C P_k)
   * part (of order 1/trials); 0 elsewhere. The Newton step uses it to correct the AI matrix's
   * residual diagonal (optimise.ts).
   */
  readonly residualExpected: Float64Array;
}

/** The dense AI matrix is formed from a0 and V on first use only: the bordered Newton step does not need it. */
class ScoreWithLazyInformation implements ScoreAndInformation {
  private dense: Float64Array | null = null;
  constructor(
    readonly gradient: Float64Array,
    readonly quadratic: Float64Array,
    readonly trace: Float64Array,
    readonly v: Float64Array,
    readonly a0: SymmetricArrowhead,
    readonly residualExpected: Float64Array,
    private readonly c: Float64Array,
    private readonly p: number,
  ) {}

  get ai(): Float64Array {
    if (!this.dense) {
      const nP = this.gradient.length;
      this.dense = this.a0.toDense();
      subtractLowRank(this.dense, this.v, this.c, nP, this.p);
    }
    return this.dense;
  }

  informationEntry(k: number, l: number): number {
    const { v, c, p } = this;
    let s = 0;
    for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) s += v[k * p + a] * c[a * p + b] * v[l * p + b];
    return this.a0.get(k, l) - s;
  }
}

// The work is split into small functions on purpose: V8 optimises a small function after a few
// calls, whereas one large function runs unoptimised (and allocates a heap number for every
// floating-point temporary) for much of a short fit before its optimised code is ready.

/** Score and average information. `withInformation` false (EM steps) skips the AI matrix (ai and v are then all zero). */
export function scoreAndInformation(frame: ModelFrame, ev: Evaluation, active: readonly ActiveParameter[][], withInformation = true): ScoreAndInformation {
  const nP = frame.layout.parameters.length;
  const p = frame.stats.fixed.length;
  const trace = new Float64Array(nP);
  const quadratic = new Float64Array(nP);
  const ai = new SymmetricArrowhead(nP, frame.sharedParameters);
  const v = new Float64Array(nP * p);
  const work = workVectors(frame);
  const skip = ev.spectral ? frame.spectralPattern : null;
  const residualExpected = new Float64Array(nP);
  let col = 0; // the pattern's first column in ev.hyy
  for (let q = 0; q < ev.patterns.length; q++) {
    const i0 = frame.patternTrial[q];
    if (!(skip && skip[q])) {
      patternTrace(frame, ev, q, active[i0], trace, withInformation ? residualExpected : null);
      patternQuadratic(frame, ev, q, col, active[i0], quadratic, withInformation ? ai : null, work);
      if (withInformation) patternLinear(frame, ev, q, active[i0], v, work);
    }
    col += frame.moments[q].nColumns;
  }
  if (ev.spectral) for (let g = 0; g < frame.spectral.length; g++) spectralScore(frame, ev, g, { trace, quadratic, ai, v, information: withInformation, residualExpected });
  const gradient = new Float64Array(nP);
  for (let k = 0; k < nP; k++) gradient[k] = trace[k] - quadratic[k];
  return new ScoreWithLazyInformation(gradient, quadratic, trace, v, ai, residualExpected, ev.c, p);
}

interface WorkVectors {
  readonly h: Float64Array;
  readonly h2: Float64Array;
  readonly h2y: Float64Array;
  readonly av: Float64Array;
  readonly kr: Float64Array;
}

function workVectors(frame: ModelFrame): WorkVectors {
  // every trial has the size of its pattern's representative: a loop over patterns, not trials
  let maxM = 1;
  for (const i of frame.patternTrial) if (frame.stats.trials[i].m > maxM) maxM = frame.stats.trials[i].m;
  return { h: new Float64Array(maxM), h2: new Float64Array(maxM), h2y: new Float64Array(maxM), av: new Float64Array(maxM), kr: new Float64Array(maxM) };
}

/** Design-only trace terms tr(P V_k) of one pattern, times its number of trials. */
function patternTrace(frame: ModelFrame, ev: Evaluation, q: number, act: readonly ActiveParameter[], trace: Float64Array, residualExpected: Float64Array | null): void {
  const t = frame.stats.trials[frame.patternTrial[q]];
  const pat = ev.patterns[q];
  const p = frame.stats.fixed.length;
  const mz = t.m - 1;
  const tc = t.fixedColumns;
  const cl = localBlock(ev.c, p, t.fixedIndex);
  const count = frame.patternCount[q];
  for (let ia = 0; ia < act.length; ia++) {
    const a = act[ia];
    const tr = a.columns ? termTrace(pat.hzz, a.columns, tc, cl, mz) : residualTrace(pat, t.n, tc, cl, mz);
    trace[a.index] += count * tr;
    // a trial's own residual parameter (one residual per trial): its expected information's own part
    if (!a.columns && residualExpected && count === 1 && a.index >= frame.sharedParameters) residualExpected[a.index] = residualOwnExpected(pat, t.n, tc, cl, mz);
  }
}

/** tr(V^-2) - 2 tr(C X'V^-3 X) for one trial block (as secondOrder's residual pair, without tr(C P C P)). */
function residualOwnExpected(pat: PatternState, n: number, tc: Int32Array, cl: Float64Array, mz: number): number {
  const H2 = ensurePatternH2(pat, mz);
  const R = pat.randomColumns;
  const r = R.length;
  const nt = tc.length;
  const s2 = pat.sigma2;
  let trCH3 = 0;
  for (let x = 0; x < nt; x++)
    for (let y = 0; y < nt; y++) {
      // H3_yx = (H2_yx - gz_y. H2_Rx) / sigma2
      let h3 = H2[tc[y] * mz + tc[x]];
      for (let b = 0; b < r; b++) h3 -= pat.gz[tc[y] * r + b] * H2[R[b] * mz + tc[x]];
      trCH3 += (cl[x * nt + y] * h3) / s2;
    }
  return (n - 2 * pat.trWK + pat.trWKWK) / (s2 * s2) - 2 * trCH3;
}

function termTrace(H: Float64Array, Z: Int32Array, tc: Int32Array, cl: Float64Array, mz: number): number {
  const nt = tc.length;
  let tr = 0;
  for (let jz = 0; jz < Z.length; jz++) {
    const j = Z[jz];
    tr += H[j * mz + j];
    let s = 0;
    for (let x = 0; x < nt; x++) {
      const hx = H[j * mz + tc[x]];
      if (hx === 0) continue;
      let r = 0;
      for (let y = 0; y < nt; y++) r += cl[x * nt + y] * H[j * mz + tc[y]];
      s += hx * r;
    }
    tr -= s;
  }
  return tr;
}

function residualTrace(pat: PatternState, n: number, tc: Int32Array, cl: Float64Array, mz: number): number {
  const H2 = ensurePatternH2(pat, mz);
  const nt = tc.length;
  const tr = (n - pat.trWK) / pat.sigma2;
  let s = 0;
  for (let x = 0; x < nt; x++) for (let y = 0; y < nt; y++) s += cl[x * nt + y] * H2[tc[y] * mz + tc[x]];
  return tr - s;
}

/** Quadratic terms y'P V_k P y and (if ai is given) the block part of the AI matrix, column by column. */
function patternQuadratic(frame: ModelFrame, ev: Evaluation, q: number, col0: number, act: readonly ActiveParameter[], quadratic: Float64Array, ai: SymmetricArrowhead | null, w: WorkVectors): void {
  const nP = frame.layout.parameters.length;
  const t = frame.stats.trials[frame.patternTrial[q]];
  const pat = ev.patterns[q];
  const mo = frame.moments[q];
  const m = t.m;
  const mz = m - 1;
  const H = pat.hzz;
  const H2 = ensurePatternH2(pat, mz);
  const s2 = pat.sigma2;
  const tc = t.fixedColumns;
  const tg = t.fixedIndex;
  const { h, h2, h2y } = w;
  let col = col0;
  // Every term below is of degree two in (u, c): where a constant (beta) meets a data-linear
  // quantity the column's c stands in for the trial's 1.
  for (let f = 0; f < mo.nColumns; f++, col++) {
    // the column's data vector u = columns[uo ...] and its design rows of B'V^-1 y at ev.hzy[o ...]
    const u = mo.columns;
    const uo = f * m;
    const c = u[uo + mz];
    const o = frame.columnOffsets[q] + f * mz;
    vectorsOf(H, H2, pat, ev.hzy, o, c, ev.beta, tc, tg, mz, h, h2, h2y);
    h2[mz] = h2Last(pat, u, uo, ev.hzy, o, ev.hyy[col], c, h2y, ev.beta, tc, tg);
    for (let ia = 0; ia < act.length; ia++) {
      const a = act[ia];
      quadratic[a.index] += a.columns ? sumSquaresOn(h, a.columns) : residualQuadratic(h2, c, ev.beta, tc, tg, mz);
    }
    if (!ai) continue;
    for (let ia = 0; ia < act.length; ia++) {
      const A = act[ia];
      for (let ib = ia; ib < act.length; ib++) {
        const B = act[ib];
        let val: number;
        if (A.columns && B.columns) val = termTermInformation(H, h, A.columns, B.columns, mz);
        else if (A.columns || B.columns) val = dotOn(h, h2, (A.columns ?? B.columns)!);
        else val = residualInformation(t.gram, pat, u, uo, c, ev.beta, tc, tg, h2, m, w);
        ai.addSymmetric(A.index, B.index, val);
      }
    }
  }
  // the y'y parts: r'V^-2 r and r'V^-3 r contain sum y'y / sigma2^2 and / sigma2^3
  for (let ia = 0; ia < act.length; ia++) {
    const a = act[ia];
    if (a.columns) continue;
    quadratic[a.index] += mo.sumYy / (s2 * s2);
    if (ai) ai.addSymmetric(a.index, a.index, mo.sumYy / (s2 * s2 * s2));
  }
}

/** y entry of h2 = B'V^-2 r: (H_yy - u_R' W H_Ry) / sigma2 - c beta . h2y_T (y'y part added per pattern). */
function h2Last(pat: PatternState, u: Float64Array, uo: number, hzy: Float64Array, ho: number, hyy: number, c: number, h2y: Float64Array, beta: Float64Array, tc: Int32Array, tg: Int32Array): number {
  const R = pat.randomColumns;
  const r = R.length;
  let v = hyy;
  for (let a = 0; a < r; a++) {
    let w = 0;
    for (let b = 0; b < r; b++) w += pat.w[a * r + b] * hzy[ho + R[b]];
    v -= u[uo + R[a]] * w;
  }
  v /= pat.sigma2;
  for (let x = 0; x < tc.length; x++) v -= c * h2y[tc[x]] * beta[tg[x]];
  return v;
}

function sumSquaresOn(h: Float64Array, Z: Int32Array): number {
  let s = 0;
  for (let jz = 0; jz < Z.length; jz++) s += h[Z[jz]] * h[Z[jz]];
  return s;
}

function dotOn(a: Float64Array, b: Float64Array, Z: Int32Array): number {
  let s = 0;
  for (let jz = 0; jz < Z.length; jz++) s += a[Z[jz]] * b[Z[jz]];
  return s;
}

function residualQuadratic(h2: Float64Array, c: number, beta: Float64Array, tc: Int32Array, tg: Int32Array, mz: number): number {
  let qq = h2[mz];
  for (let x = 0; x < tc.length; x++) qq -= c * beta[tg[x]] * h2[tc[x]];
  return qq;
}

function termTermInformation(H: Float64Array, h: Float64Array, ZA: Int32Array, ZB: Int32Array, mz: number): number {
  let val = 0;
  for (let xa = 0; xa < ZA.length; xa++) {
    const x = ZA[xa];
    if (h[x] === 0) continue;
    let sum = 0;
    for (let yb = 0; yb < ZB.length; yb++) sum += H[x * mz + ZB[yb]] * h[ZB[yb]];
    val += h[x] * sum;
  }
  return val;
}

/** r'V^-3 r = a . h2 / sigma2 with V^-1 r = B a / sigma2, a = rho - E_R W (K rho)_R. */
function residualInformation(K: Float64Array, pat: PatternState, u: Float64Array, uo: number, c: number, beta: Float64Array, tc: Int32Array, tg: Int32Array, h2: Float64Array, m: number, w: WorkVectors): number {
  const R = pat.randomColumns;
  const r = R.length;
  const nt = tc.length;
  const mz = m - 1;
  const { av, kr } = w;
  for (let b = 0; b < r; b++) {
    let sum = u[uo + R[b]];
    for (let x = 0; x < nt; x++) sum -= c * K[R[b] * m + tc[x]] * beta[tg[x]];
    kr[b] = sum;
  }
  av.fill(0, 0, m);
  for (let x = 0; x < nt; x++) av[tc[x]] = -c * beta[tg[x]];
  av[mz] = 1;
  for (let a = 0; a < r; a++) {
    let sum = 0;
    for (let b = 0; b < r; b++) sum += pat.w[a * r + b] * kr[b];
    av[R[a]] -= sum;
  }
  const s2 = pat.sigma2;
  let val = 0;
  for (let j = 0; j < m; j++) val += (av[j] / s2) * h2[j];
  return val;
}

/** Linear terms of v_k = X'V^-1 V_k V^-1 r from the pattern's summed data vector (c = number of trials). */
function patternLinear(frame: ModelFrame, ev: Evaluation, q: number, act: readonly ActiveParameter[], v: Float64Array, w: WorkVectors): void {
  const p = frame.stats.fixed.length;
  const t = frame.stats.trials[frame.patternTrial[q]];
  const pat = ev.patterns[q];
  const mo = frame.moments[q];
  const mz = t.m - 1;
  const H = pat.hzz;
  const H2 = ensurePatternH2(pat, mz);
  const tc = t.fixedColumns;
  const tg = t.fixedIndex;
  const nt = tc.length;
  const { h, h2, h2y } = w;
  vectorsOf(H, H2, pat, ev.hzySum[q], 0, mo.sum[mz], ev.beta, tc, tg, mz, h, h2, h2y);
  for (let ia = 0; ia < act.length; ia++) {
    const a = act[ia];
    const k = a.index;
    if (a.columns) {
      const Z = a.columns;
      for (let jz = 0; jz < Z.length; jz++) for (let x = 0; x < nt; x++) v[k * p + tg[x]] += H[tc[x] * mz + Z[jz]] * h[Z[jz]];
    } else {
      for (let x = 0; x < nt; x++) v[k * p + tg[x]] += h2[tc[x]];
    }
  }
}

/** The second AI term: ai -= V C V' (full rows, so every write is sequential). */
function subtractLowRank(ai: Float64Array, v: Float64Array, c: Float64Array, nP: number, p: number): void {
  const cv = new Float64Array(nP * p);
  for (let k = 0; k < nP; k++)
    for (let a = 0; a < p; a++) {
      let s = 0;
      for (let b = 0; b < p; b++) s += c[a * p + b] * v[k * p + b];
      cv[k * p + a] = s;
    }
  for (let k = 0; k < nP; k++) subtractRow(ai, v, cv, k, nP, p);
}

function subtractRow(ai: Float64Array, v: Float64Array, cv: Float64Array, k: number, nP: number, p: number): void {
  const row = k * nP;
  for (let l = 0; l < nP; l++) {
    // same operand order as the (k <= l) entry so the matrix stays exactly symmetric
    const lo = k <= l ? k : l;
    const hi = k <= l ? l : k;
    let s = 0;
    for (let a = 0; a < p; a++) s += v[lo * p + a] * cv[hi * p + a];
    ai[row + l] -= s;
  }
}

/**
 * Design rows of h = B'V^-1 r and h2 = B'V^-2 r for one data column (u, c): r = y - X beta, with
 * the column's c in place of the trial's 1 where beta enters. Also h2y = design rows of B'V^-2 y.
 * The column's design rows of B'V^-1 y are hzy[ho ...].
 */
function vectorsOf(H: Float64Array, H2: Float64Array, pat: PatternState, hzy: Float64Array, ho: number, c: number, beta: Float64Array, tc: Int32Array, tg: Int32Array, mz: number, h: Float64Array, h2: Float64Array, h2y: Float64Array): void {
  const R = pat.randomColumns;
  const r = R.length;
  const nt = tc.length;
  for (let j = 0; j < mz; j++) {
    let s = hzy[ho + j];
    let s2 = 0;
    for (let x = 0; x < nt; x++) {
      const b = beta[tg[x]];
      s -= c * H[j * mz + tc[x]] * b;
      s2 += H2[j * mz + tc[x]] * b;
    }
    h[j] = s;
    let y2 = hzy[ho + j];
    for (let b = 0; b < r; b++) y2 -= pat.gz[j * r + b] * hzy[ho + R[b]];
    y2 /= pat.sigma2;
    h2y[j] = y2;
    h2[j] = y2 - c * s2;
  }
}
