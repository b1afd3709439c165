// The crossed site-year likelihood (crossedYearLikelihood.ts) with its analytic gradient in
// (yearTau2, siteTau2, trialTau2) and the average information, for the bootstrap refits: a
// Newton step then costs three O(trials + sites x years²) passes instead of nine likelihoods.
//
// V = D + trialTau2 I + siteTau2 Zs Zs' + yearTau2 Zy Zy', A = V without the year term
// (block-diagonal by site, inverted by Sherman–Morrison: A_s⁻¹ = W - k w w', w = 1/(v + trialTau2),
// k = siteTau2 / f, f = 1 + siteTau2 sum w), and V⁻¹ = A⁻¹ - yearTau2 A⁻¹Zy B⁻¹ Zy'A⁻¹ with
// B = I + yearTau2 Zy'A⁻¹Zy (Woodbury). With P = V⁻¹ - V⁻¹1 (1'V⁻¹1)⁻¹ 1'V⁻¹ (ML uses V⁻¹ in
// the traces, the mean profiled out; Py = V⁻¹(y - mu) in both) and Vk = Zk Zk' (Zt = I):
//   d logLik / d tau2_k = -1/2 tr(P Vk) + 1/2 (Py)' Vk (Py)
//   tr(P Vk) = sum over the columns z of Zk of z'V⁻¹z - (z'V⁻¹1)² / 1'V⁻¹1   (REML)
//   average information AI_kl = 1/2 (Vk Py)' P (Vl Py)   (both: the data part of -d² y'Py / 2)
// (the standard REML derivatives, e.g. Searle, Casella & McCulloch 1992 ch. 6; the average
// information of Gilmour, Thompson & Cullis 1995). Every z'V⁻¹u needed is a site-by-site sum:
// for a site indicator z_s'A⁻¹u = sum w u / f, for a trial e_j'A⁻¹u = w_j u_j - k w_j sum w u,
// and Zy'A⁻¹ e_j = w_j (e_year(j) - k sigma_s) with sigma_s the site's w-sums by year.
import { choleskyInPlace } from '../../linalg/inPlace.js';
import type { LikelihoodKind } from './siteTrialLikelihood.js';
import type { CrossedGroup } from './crossedYearLikelihood.js';

export interface CrossedScore {
  logLik: number;
  mu: number;
  muVariance: number;
  /** d logLik / d [yearTau2, siteTau2, trialTau2]. */
  gradient: [number, number, number];
  /** Average information in the same order, row-major 3 x 3 (positive semi-definite). */
  information: number[];
}

/**
 * Inner products under A⁻¹ of r per-trial columns U (trial-major, trials x r) with each other
 * (R, r x r), with the year indicators (Z, r x years) and of the year indicators (Gzz).
 */
function gramUnderA(groups: readonly CrossedGroup[], years: number, w: Float64Array, k: Float64Array, U: Float64Array, r: number, R: Float64Array, Z: Float64Array, Gzz: Float64Array | null, sp: Float64Array, sigma: Float64Array): void {
  R.fill(0, 0, r * r);
  Z.fill(0, 0, r * years);
  Gzz?.fill(0, 0, years * years);
  let t = 0;
  for (let g = 0; g < groups.length; g++) {
    const grp = groups[g];
    sp.fill(0, 0, r);
    sigma.fill(0, 0, years);
    for (let j = 0; j < grp.y.length; j++, t++) {
      const wj = w[t];
      const a = grp.yearIndex[j];
      sigma[a] += wj;
      for (let p = 0; p < r; p++) {
        const wu = wj * U[t * r + p];
        sp[p] += wu;
        Z[p * years + a] += wu;
        for (let q = p; q < r; q++) R[p * r + q] += wu * U[t * r + q];
      }
    }
    if (Gzz) for (let a = 0; a < years; a++) Gzz[a * years + a] += sigma[a];
    const kg = k[g];
    if (kg === 0) continue;
    for (let p = 0; p < r; p++) {
      for (let q = p; q < r; q++) R[p * r + q] -= kg * sp[p] * sp[q];
      for (let a = 0; a < years; a++) if (sigma[a] !== 0) Z[p * years + a] -= kg * sp[p] * sigma[a];
    }
    if (Gzz) for (let a = 0; a < years; a++) if (sigma[a] !== 0) for (let b = 0; b < years; b++) if (sigma[b] !== 0) Gzz[a * years + b] -= kg * sigma[a] * sigma[b];
  }
  for (let p = 0; p < r; p++) for (let q = 0; q < p; q++) R[p * r + q] = R[q * r + p];
}

/** Working arrays kept between calls (one thread; rebuilt when the shape changes). */
let work = scratchFor(0, 0, 0);

function scratchFor(trials: number, sites: number, years: number) {
  return {
    trials,
    sites,
    years,
    w: new Float64Array(trials),
    k: new Float64Array(sites),
    f: new Float64Array(sites),
    U: new Float64Array(trials * 4),
    R: new Float64Array(16),
    Z: new Float64Array(4 * years),
    Gzz: new Float64Array(years * years),
    L: new Float64Array(years * years),
    Binv: new Float64Array(years * years),
    ZB: new Float64Array(4 * years),
    sp: new Float64Array(4),
    sigma: new Float64Array(years),
    beta: new Float64Array(years),
  };
}

export function crossedScore(groups: readonly CrossedGroup[], years: number, siteTau2: number, trialTau2: number, yearTau2: number, kind: LikelihoodKind): CrossedScore {
  let trials = 0;
  for (const g of groups) trials += g.y.length;
  if (work.trials !== trials || work.sites !== groups.length || work.years !== years) work = scratchFor(trials, groups.length, years);
  const { w, k, f, U, R, Z, Gzz, L, Binv, ZB, sp, sigma, beta } = work;
  const reml = kind === 'reml';
  // pass 1: weights, the nested determinant, and U = [1, y]
  let logDet = 0;
  let t = 0;
  for (let g = 0; g < groups.length; g++) {
    const grp = groups[g];
    let S = 0;
    for (let j = 0; j < grp.y.length; j++, t++) {
      const d = grp.v[j] + trialTau2;
      w[t] = 1 / d;
      S += w[t];
      logDet += Math.log(d);
      U[t * 2] = 1;
      U[t * 2 + 1] = grp.y[j];
    }
    f[g] = 1 + siteTau2 * S;
    k[g] = siteTau2 / f[g];
    logDet += Math.log(f[g]);
  }
  gramUnderA(groups, years, w, k, U, 2, R, Z, Gzz, sp, sigma);
  // B = I + yearTau2 Gzz, its Cholesky factor and inverse
  const n = years;
  for (let a = 0; a < n; a++) for (let b = 0; b <= a; b++) L[a * n + b] = (a === b ? 1 : 0) + yearTau2 * Gzz[a * n + b];
  logDet += choleskyInPlace(L, n);
  for (let col = 0; col < n; col++) {
    const x = beta;
    for (let i = 0; i < n; i++) x[i] = i === col ? 1 : 0;
    solveInPlace(L, n, x);
    for (let i = 0; i < n; i++) Binv[i * n + col] = x[i];
  }
  // V⁻¹ inner products of [1, y]: R - yearTau2 Z B⁻¹ Z'
  const vForm = (r: number, p: number, q: number) => {
    let s = 0;
    for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) s += Z[p * n + a] * Binv[a * n + b] * Z[q * n + b];
    return R[p * r + q] - yearTau2 * s;
  };
  const c = vForm(2, 0, 0);
  const tt = vForm(2, 0, 1);
  const qq = vForm(2, 1, 1);
  const mu = tt / c;
  const rss = qq - (tt * tt) / c;
  const logLik = -0.5 * ((trials - (reml ? 1 : 0)) * Math.log(2 * Math.PI) + logDet + rss + (reml ? Math.log(c) : 0));
  // B⁻¹ Zy'A⁻¹1 and B⁻¹ Zy'A⁻¹y: the year columns' V⁻¹ products with 1 and y
  for (let p = 0; p < 2; p++)
    for (let a = 0; a < n; a++) {
      let s = 0;
      for (let b = 0; b < n; b++) s += Binv[a * n + b] * Z[p * n + b];
      ZB[p * n + a] = s;
    }
  // year: z_a'V⁻¹z_a = (Gzz B⁻¹)_aa, z_a'V⁻¹1 = (B⁻¹ g1z)_a, z_a'V⁻¹y = (B⁻¹ gyz)_a
  let trYear = 0;
  let quadYear = 0;
  for (let a = 0; a < n; a++) {
    let gb = 0;
    for (let b = 0; b < n; b++) gb += Gzz[a * n + b] * Binv[b * n + a];
    const z1 = ZB[a];
    trYear += gb - (reml ? (z1 * z1) / c : 0);
    const py = ZB[n + a] - mu * z1;
    quadYear += py * py;
  }
  // pass 2: the site and trial columns, and U = [1, Zy Zy'Py, Zs Zs'Py, Py] for the information
  let trSite = 0;
  let quadSite = 0;
  let trTrial = 0;
  let quadTrial = 0;
  t = 0;
  for (let g = 0; g < groups.length; g++) {
    const grp = groups[g];
    sigma.fill(0);
    let S = 0;
    let Sy = 0;
    const t0 = t;
    for (let j = 0; j < grp.y.length; j++, t++) {
      sigma[grp.yearIndex[j]] += w[t];
      S += w[t];
      Sy += w[t] * grp.y[j];
    }
    let sb = 0;
    let s1 = 0;
    let sy = 0;
    for (let a = 0; a < n; a++) {
      let s = 0;
      for (let b = 0; b < n; b++) if (sigma[b] !== 0) s += Binv[a * n + b] * sigma[b];
      beta[a] = s;
      sb += sigma[a] * s;
      s1 += sigma[a] * ZB[a];
      sy += sigma[a] * ZB[n + a];
    }
    const fg = f[g];
    const kg = k[g];
    const zVz = S / fg - (yearTau2 * sb) / (fg * fg);
    const zV1 = S / fg - (yearTau2 * s1) / fg;
    const zVy = Sy / fg - (yearTau2 * sy) / fg;
    trSite += zVz - (reml ? (zV1 * zV1) / c : 0);
    const pySite = zVy - mu * zV1;
    quadSite += pySite * pySite;
    t = t0;
    for (let j = 0; j < grp.y.length; j++, t++) {
      const wj = w[t];
      const a = grp.yearIndex[j];
      const eVe = wj - kg * wj * wj - yearTau2 * wj * wj * (Binv[a * n + a] - 2 * kg * beta[a] + kg * kg * sb);
      const eV1 = wj / fg - yearTau2 * wj * (ZB[a] - kg * s1);
      const eVy = wj * grp.y[j] - kg * wj * Sy - yearTau2 * wj * (ZB[n + a] - kg * sy);
      trTrial += eVe - (reml ? (eV1 * eV1) / c : 0);
      const py = eVy - mu * eV1;
      quadTrial += py * py;
      U[t * 4] = 1;
      U[t * 4 + 2] = pySite;
      U[t * 4 + 3] = py;
    }
  }
  // the year column of U: z_year(j)'Py
  t = 0;
  for (const grp of groups)
    for (let j = 0; j < grp.y.length; j++, t++) {
      const a = grp.yearIndex[j];
      U[t * 4 + 1] = ZB[n + a] - mu * ZB[a];
    }
  gramUnderA(groups, years, w, k, U, 4, R, Z, null, sp, sigma);
  const M = (p: number, q: number) => vForm(4, p, q);
  const m0 = [M(1, 0), M(2, 0), M(3, 0)];
  const information = new Array<number>(9);
  for (let p = 0; p < 3; p++)
    for (let q = p; q < 3; q++) information[p * 3 + q] = information[q * 3 + p] = 0.5 * (M(p + 1, q + 1) - (m0[p] * m0[q]) / c);
  return {
    logLik,
    mu,
    muVariance: 1 / c,
    gradient: [0.5 * (quadYear - trYear), 0.5 * (quadSite - trSite), 0.5 * (quadTrial - trTrial)],
    information,
  };
}

/** Solve (L L') x = x in place, L lower triangular n x n. */
function solveInPlace(L: Float64Array, n: number, x: Float64Array): void {
  for (let i = 0; i < n; i++) {
    let s = x[i];
    for (let q = 0; q < i; q++) s -= L[i * n + q] * x[q];
    x[i] = s / L[i * n + i];
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = x[i];
    for (let q = i + 1; q < n; q++) s -= L[q * n + i] * x[q];
    x[i] = s / L[i * n + i];
  }
}
