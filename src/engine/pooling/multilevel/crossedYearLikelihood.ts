// The site-and-trial likelihood crossed with year: y = mu + site + year + trial-within-site +
// sampling error, the year effect (variance yearTau2) shared by every trial of that year. V = A +
// yearTau2 Zy Zy' with A the nested (block-diagonal by site) part; years are few, so the year
// columns form a small dense border handled by the Woodbury identity and the determinant lemma:
// the inner products of [1, y, Zy] under A⁻¹ are accumulated site by site (Sherman–Morrison), and
// only a (years x years) matrix is factorised. O(trials x years²) per evaluation, and no
// allocation but the result: bootstrap refits call it about a hundred times each, so the working
// arrays are kept between calls (the Cholesky steps are written out in the library's order, so
// the numbers are the same bits as with cholesky/cholSolve).
import { choleskyInPlace } from '../../linalg/inPlace.js';
import type { LikelihoodKind, SiteGroup, SiteTrialFit } from './siteTrialLikelihood.js';

export interface CrossedGroup extends SiteGroup {
  /** Index of each trial's year in 0..years-1. */
  readonly yearIndex: Int32Array;
}

/** Working arrays reused between evaluations (one thread; grown when more years come). */
let work = scratchFor(0);

function scratchFor(years: number) {
  const m = years + 2;
  return { years, G: new Float64Array(m * m), sums: new Float64Array(m), L: new Float64Array(years * years), s1: new Float64Array(years), sy: new Float64Array(years) };
}

/** Solve (L L') x = x in place, L lower triangular n x n (cholSolve's order of operations). */
function solveInPlace(L: Float64Array, n: number, x: Float64Array): void {
  for (let i = 0; i < n; i++) {
    let s = x[i];
    for (let k = 0; k < i; k++) s -= L[i * n + k] * x[k];
    x[i] = s / L[i * n + i];
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = x[i];
    for (let k = i + 1; k < n; k++) s -= L[k * n + i] * x[k];
    x[i] = s / L[i * n + i];
  }
}

export function crossedLogLik(groups: readonly CrossedGroup[], years: number, siteTau2: number, trialTau2: number, yearTau2: number, kind: LikelihoodKind): SiteTrialFit {
  const m = years + 2; // columns: 0 = ones, 1 = y, 2.. = year indicators
  if (work.years !== years) work = scratchFor(years);
  const { G, sums, L, s1, sy } = work;
  G.fill(0);
  let n = 0;
  let logDetA = 0;
  for (const g of groups) {
    sums.fill(0);
    let S = 0;
    for (let j = 0; j < g.y.length; j++) {
      const d = g.v[j] + trialTau2;
      const w = 1 / d;
      const yj = g.y[j];
      const c = 2 + g.yearIndex[j];
      logDetA += Math.log(d);
      S += w;
      sums[0] += w;
      sums[1] += w * yj;
      sums[c] += w;
      // the diagonal part w u u', u = (1, y, e_year)
      G[0] += w;
      G[1] += w * yj;
      G[m + 1] += w * yj * yj;
      G[c] += w;
      G[m + c] += w * yj;
      G[c * m + c] += w;
    }
    n += g.y.length;
    const f = 1 + siteTau2 * S;
    logDetA += Math.log(f);
    const k = siteTau2 / f;
    if (k > 0) for (let a = 0; a < m; a++) if (sums[a] !== 0) for (let b = a; b < m; b++) G[a * m + b] -= k * sums[a] * sums[b];
  }
  const at = (a: number, b: number) => (a <= b ? G[a * m + b] : G[b * m + a]);
  let c = at(0, 0);
  let t = at(0, 1);
  let q = at(1, 1);
  let logDet = logDetA;
  if (yearTau2 > 0 && years > 0) {
    // V⁻¹ inner products: G_ab - yearTau2 G_az (I + yearTau2 G_zz)⁻¹ G_zb
    const n = years;
    for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) L[a * n + b] = (a === b ? 1 : 0) + yearTau2 * at(2 + a, 2 + b);
    // B = L L' in place (cholesky()'s loop and log-determinant, the same bits)
    logDet += choleskyInPlace(L, n);
    for (let a = 0; a < n; a++) {
      s1[a] = at(0, 2 + a);
      sy[a] = at(1, 2 + a);
    }
    solveInPlace(L, n, s1);
    solveInPlace(L, n, sy);
    let d11 = 0;
    let d1y = 0;
    let dyy = 0;
    for (let a = 0; a < n; a++) {
      const z1 = at(0, 2 + a);
      const zy = at(1, 2 + a);
      d11 += z1 * s1[a];
      d1y += z1 * sy[a];
      dyy += zy * sy[a];
    }
    c -= yearTau2 * d11;
    t -= yearTau2 * d1y;
    q -= yearTau2 * dyy;
  }
  const mu = t / c;
  const rss = q - (t * t) / c;
  const p = kind === 'reml' ? 1 : 0;
  const logLik = -0.5 * ((n - p) * Math.log(2 * Math.PI) + logDet + rss + (kind === 'reml' ? Math.log(c) : 0));
  return { logLik, mu, muVariance: 1 / c };
}
