// Gradient and average information of the per-trial-residual crossed model's -2 REML
// log-likelihood in its variances (the terms' v_k, then one r_i per trial):
//   df/dv_k = tr(P Z_k Z_k') - |Z_k'Py|²    (crossedDerivatives.ts with the residual at 1)
//   df/dr_i = tr(P_ii) - |(Py)_i|²,  tr(P_ii) = tr(V0_i^-1) - tr(R_i K'V0_i^-2 K),
// R_i = M_i C^-1 M_i' the trial's block of the selected inverse (as in crossedDerivatives.ts).
// The average information W'PW (W the working variates: Z_k Z_k'Py for a term, (Py)_i on trial i
// for a residual) has one row per trial, thousands at network scale, so it is never formed: it
// is applied to a vector (applyInformation), each application one pass over the trials and one
// solve through the arrowhead, because every working variate is, within trial i, J_i c + x (Py)_i
// (J = [K | B]) and P = V0^-1 - V0^-1 A C^-1 A'V0^-1 (A = [Z Lambda | X]).
import type { CrossedData } from './crossedData.js';
import { localColumns, type CrossedLayout } from './crossedLayout.js';
import { pack, type CrossedEvaluation, type PackedColumns } from './crossedLikelihood.js';
import { crossedDerivatives } from './crossedDerivatives.js';
import { selectedInverse, siteForward } from './arrowheadInverse.js';
import { solveShared } from './crossedPredictions.js';
import { backSolveTranspose, forwardSolve, forwardSolveColumns } from './denseSmall.js';

/** What one trial keeps for the information's applications. */
interface TrialState {
  readonly n: number;
  /** Size of J = [K | B] and L^-1 J (n x j). */
  readonly j: number;
  readonly lj: Float64Array;
  /** J'Py = (kappa | zeta) and L^-1 (Py)_i. */
  readonly jpy: Float64Array;
  readonly fpy: Float64Array;
}

export interface PerTrialDerivatives {
  /** d f / d (v_1..v_T, r_1..r_n), f = -2 REML log-likelihood. */
  readonly gradient: Float64Array;
  /** The average information's diagonal on the residuals (preconditioning). */
  readonly residualDiagonal: Float64Array;
  /** x -> AI x over all parameters. */
  readonly apply: (x: Float64Array) => Float64Array;
}

export function perTrialDerivatives(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, withInformation = true): PerTrialDerivatives {
  const nT = L.terms.length;
  const nTr = d.trials.length;
  const m = 1 + L.t;
  const B = L.border;
  const nb = B - 1;
  const bs = L.bs;
  const f = ev.factor;
  const gradient = new Float64Array(nT + nTr);
  gradient.set(crossedDerivatives(d, L, ev, false).gradient);
  const sol = solveShared(L, ev);
  const inv = selectedInverse(L, f);
  const columns: PackedColumns[] = [];
  for (let y = 0; y < L.nYears; y++) columns.push(pack(localColumns(L, y, ev.theta)));
  const states: TrialState[] = [];
  const siteScore = new Float64Array(L.nSites * m);
  const yearScore = new Float64Array(L.nYears * m);
  const residualDiagonal = new Float64Array(nTr);
  const R = new Float64Array(m * m);
  const mu = new Float64Array(m);
  for (let i = 0; i < nTr; i++) {
    const tr = d.trials[i];
    const lf = ev.pieces[i].layout;
    const n = tr.y.length;
    const nB = tr.nBlocks;
    const j = m + nB;
    const l = lf.l;
    const lk = lf.lk;
    // L^-1 J (the information's applications need its block columns too; the gradient only L^-1 K)
    const lj = withInformation ? new Float64Array(n * j) : lk;
    if (withInformation) {
      for (let p = 0; p < n; p++) {
        lj[p * j] = 1;
        lj[p * j + 1 + tr.treatment[p]] = 1;
        if (tr.block[p] >= 0) lj[p * j + m + tr.block[p]] = 1;
      }
      forwardSolveColumns(l, n, lj, j);
    }
    const cols = columns[tr.year];
    mu.fill(0);
    const us = sol.site[tr.site];
    for (let c = 0; c < cols.n; c++) mu[cols.row[c]] += cols.value[c] * (c < bs ? us[cols.index[c]] : sol.border[cols.index[c]]);
    // e = L^-1 (y - K mu); (Py)_i = L^-T e
    const e = Float64Array.from(tr.y);
    forwardSolve(l, n, n, e);
    for (let p = 0; p < n; p++) {
      let s = 0;
      for (let r = 0; r < m; r++) s += lk[p * m + r] * mu[r];
      e[p] -= s;
    }
    const py = Float64Array.from(e);
    backSolveTranspose(l, n, n, py);
    const jw = withInformation ? j : m;
    const jpy = new Float64Array(jw);
    for (let p = 0; p < n; p++) for (let c = 0; c < jw; c++) jpy[c] += lj[p * jw + c] * e[p];
    for (let r = 0; r < m; r++) {
      siteScore[tr.site * m + r] += jpy[r];
      yearScore[tr.year * m + r] += jpy[r];
    }
    // R = M_i C^-1 M_i' from the selected inverse
    R.fill(0);
    const { row, value, index } = cols;
    const cs = inv.site[tr.site];
    const cc = inv.coupling[tr.site];
    for (let a = 0; a < cols.n; a++) {
      const ia = index[a];
      const va = value[a];
      const ra = row[a] * m;
      if (a < bs) {
        for (let b = 0; b < bs; b++) R[ra + row[b]] += va * value[b] * cs[ia * bs + index[b]];
        for (let b = bs; b < cols.n; b++) R[ra + row[b]] += va * value[b] * cc[ia * nb + index[b]];
      } else {
        for (let b = 0; b < bs; b++) R[ra + row[b]] += va * value[b] * cc[index[b] * nb + ia];
        for (let b = bs; b < cols.n; b++) R[ra + row[b]] += va * value[b] * inv.border[ia * nb + index[b]];
      }
    }
    // tr(V0^-1) = |L^-1|²_F; K'V0^-2 K = (L^-T L^-1 K)'(L^-T L^-1 K)
    const linv = new Float64Array(n * n);
    for (let p = 0; p < n; p++) linv[p * n + p] = 1;
    forwardSolveColumns(l, n, linv, n);
    let trV0 = 0;
    for (const x of linv) trV0 += x * x;
    const q = new Float64Array(n);
    const qk = new Float64Array(n * m);
    for (let r = 0; r < m; r++) {
      for (let p = 0; p < n; p++) q[p] = lk[p * m + r];
      backSolveTranspose(l, n, n, q);
      for (let p = 0; p < n; p++) qk[p * m + r] = q[p];
    }
    let trRG = 0;
    for (let r = 0; r < m; r++)
      for (let s = 0; s < m; s++) {
        if (R[r * m + s] === 0) continue;
        let g = 0;
        for (let p = 0; p < n; p++) g += qk[p * m + r] * qk[p * m + s];
        trRG += R[r * m + s] * g;
      }
    let pySq = 0;
    for (const x of py) pySq += x * x;
    gradient[nT + i] = trV0 - trRG - pySq;
    if (!withInformation) continue;
    const fpy = Float64Array.from(py);
    forwardSolve(l, n, n, fpy);
    // AI_ii = py'P_ii py = |L^-1 py|² - (K'V0^-1 py)' R (K'V0^-1 py)
    let fSq = 0;
    for (const x of fpy) fSq += x * x;
    const kv = new Float64Array(m);
    for (let p = 0; p < n; p++) for (let r = 0; r < m; r++) kv[r] += lk[p * m + r] * fpy[p];
    let rq = 0;
    for (let r = 0; r < m; r++) for (let s = 0; s < m; s++) rq += kv[r] * R[r * m + s] * kv[s];
    residualDiagonal[i] = fSq - rq;
    states.push({ n, j, lj, jpy, fpy });
  }

  const { at } = L;
  const nSiteRows = L.nSites * bs;
  const plotOffset = new Int32Array(nTr + 1);
  let maxJ = m;
  for (let i = 0; i < states.length; i++) maxJ = Math.max(maxJ, states[i].j);
  for (let i = 0; i < nTr; i++) plotOffset[i + 1] = plotOffset[i] + d.trials[i].y.length;
  const coefficientScratch = new Float64Array(maxJ);
  const apply = (x: Float64Array): Float64Array => {
    if (!withInformation) throw new Error('perTrialDerivatives: the information was not prepared (withInformation = false)');
    const rhs = new Float64Array(nSiteRows + nb);
    const f = new Float64Array(plotOffset[nTr]);
    const g = new Float64Array(m);
    // u_i = J c_i + x_ri (Py)_i; f_i = L^-1 u_i; rhs = A'V0^-1 u = sum_i M_i' (L^-1 K)' f_i
    for (let i = 0; i < nTr; i++) {
      const tr = d.trials[i];
      const st = states[i];
      const c = workingCoefficients(i, x);
      const fi = f.subarray(plotOffset[i], plotOffset[i + 1]);
      const xr = x[nT + i];
      for (let p = 0; p < st.n; p++) {
        let s = xr * st.fpy[p];
        for (let q = 0; q < st.j; q++) s += st.lj[p * st.j + q] * c[q];
        fi[p] = s;
      }
      g.fill(0);
      for (let p = 0; p < st.n; p++) for (let r = 0; r < m; r++) g[r] += st.lj[p * st.j + r] * fi[p];
      const cols = columns[tr.year];
      for (let a = 0; a < cols.n; a++) {
        const v = cols.value[a] * g[cols.row[a]];
        if (cols.inSite[a]) rhs[tr.site * bs + cols.index[a]] += v;
        else rhs[nSiteRows + cols.index[a]] += v;
      }
    }
    solveCoefficients(L, ev, rhs);
    const out = new Float64Array(nT + nTr);
    const t = new Float64Array(m + 64);
    for (let i = 0; i < nTr; i++) {
      const tr = d.trials[i];
      const st = states[i];
      const cols = columns[tr.year];
      mu.fill(0);
      for (let a = 0; a < cols.n; a++) mu[cols.row[a]] += cols.value[a] * (cols.inSite[a] ? rhs[tr.site * bs + cols.index[a]] : rhs[nSiteRows + cols.index[a]]);
      // e' = f - L^-1 K mu = L^-1 (u - A z): P u = L^-T e'
      const fi = f.subarray(plotOffset[i], plotOffset[i + 1]);
      const tt = t.length >= st.j ? t : new Float64Array(st.j);
      tt.fill(0, 0, st.j);
      let dot = 0;
      for (let p = 0; p < st.n; p++) {
        let s = fi[p];
        for (let r = 0; r < m; r++) s -= st.lj[p * st.j + r] * mu[r];
        dot += st.fpy[p] * s;
        for (let q = 0; q < st.j; q++) tt[q] += st.lj[p * st.j + q] * s;
      }
      out[nT + i] = dot;
      // term k: c_k,i' J'P u
      scatterTerms(i, tt, out);
    }
    return out;
  };

  /** sum_k x_k c_k,i: the trial's part of sum_k x_k Z_k Z_k' P y in its basis J. */
  function workingCoefficients(i: number, xs: Float64Array): Float64Array {
    const tr = d.trials[i];
    const st = states[i];
    const x = (k: number) => xs[k];
    const c = coefficientScratch;
    c.fill(0, 0, st.j);
    const sRow = tr.site * m;
    const yRow = tr.year * m;
    if (at.site >= 0) c[0] += x(at.site) * siteScore[sRow];
    if (at.year >= 0) c[0] += x(at.year) * yearScore[yRow];
    if (at.trial >= 0) c[0] += x(at.trial) * st.jpy[0];
    for (let r = 1; r < m; r++) {
      if (at['treatment-by-site'] >= 0) c[r] += x(at['treatment-by-site']) * siteScore[sRow + r];
      if (at['treatment-by-year'] >= 0) c[r] += x(at['treatment-by-year']) * yearScore[yRow + r];
      if (at['treatment-by-trial'] >= 0) c[r] += x(at['treatment-by-trial']) * st.jpy[r];
    }
    if (at.block >= 0) for (let b = m; b < st.j; b++) c[b] += x(at.block) * st.jpy[b];
    return c;
  }

  /** out_k += c_k,i' t for every term (t = J'P u on trial i): the transpose of workingCoefficients. */
  function scatterTerms(i: number, t: Float64Array, out: Float64Array): void {
    const tr = d.trials[i];
    const st = states[i];
    const sRow = tr.site * m;
    const yRow = tr.year * m;
    if (at.site >= 0) out[at.site] += siteScore[sRow] * t[0];
    if (at.year >= 0) out[at.year] += yearScore[yRow] * t[0];
    if (at.trial >= 0) out[at.trial] += st.jpy[0] * t[0];
    for (let r = 1; r < m; r++) {
      if (at['treatment-by-site'] >= 0) out[at['treatment-by-site']] += siteScore[sRow + r] * t[r];
      if (at['treatment-by-year'] >= 0) out[at['treatment-by-year']] += yearScore[yRow + r] * t[r];
      if (at['treatment-by-trial'] >= 0) out[at['treatment-by-trial']] += st.jpy[r] * t[r];
    }
    if (at.block >= 0) for (let b = m; b < st.j; b++) out[at.block] += st.jpy[b] * t[b];
  }

  return { gradient, residualDiagonal, apply };
}

/**
 * Solve C z = g in place, C the coefficient matrix of the shared and fixed effects whose
 * arrowhead factor the evaluation holds; g is laid out as the sites' parts (bs each) then the
 * border (years and fixed effects).
 */
export function solveCoefficients(L: CrossedLayout, ev: CrossedEvaluation, g: Float64Array): void {
  const B = L.border;
  const nb = B - 1;
  const bs = L.bs;
  const f = ev.factor;
  const nSiteRows = L.nSites * bs;
  const border = g.subarray(nSiteRows);
  if (bs > 0) for (let s = 0; s < L.nSites; s++) siteForward(L, f, s, g.subarray(s * bs, (s + 1) * bs), border);
  forwardSolve(f.borderFactor, B, nb, border);
  backSolveTranspose(f.borderFactor, B, nb, border);
  if (bs > 0)
    for (let s = 0; s < L.nSites; s++) {
      const xs = g.subarray(s * bs, (s + 1) * bs);
      const w = f.siteW[s];
      for (let r = 0; r < bs; r++) {
        let v = xs[r];
        for (let k = 0; k < nb; k++) v -= w[r * B + k] * border[k];
        xs[r] = v;
      }
      backSolveTranspose(f.siteFactor[s], bs, bs, xs);
    }
}

/** The gradient alone (the Hessian's difference products need nothing else). */
export function perTrialGradient(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation): Float64Array {
  return perTrialDerivatives(d, L, ev, false).gradient;
}
