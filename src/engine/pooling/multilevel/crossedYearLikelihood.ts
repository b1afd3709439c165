// The site-and-trial likelihood crossed with year: y = mu + site + year + trial-within-site +
// sampling error, the year effect (variance yearTau2) shared by every trial of that year. V = A +
// yearTau2 Zy Zy' with A the nested (block-diagonal by site) part; years are few, so the year
// columns form a small dense border handled by the Woodbury identity and the determinant lemma:
// the inner products of [1, y, Zy] under A⁻¹ are accumulated site by site (Sherman–Morrison), and
// only a (years x years) matrix is factorised. O(trials x years²) per evaluation.
import { cholesky, cholLogDet, cholSolve } from '../../linalg/cholesky.js';
import { zeros, type Matrix } from '../../linalg/matrix.js';
import type { LikelihoodKind, SiteGroup, SiteTrialFit } from './siteTrialLikelihood.js';

export interface CrossedGroup extends SiteGroup {
  /** Index of each trial's year in 0..years-1. */
  readonly yearIndex: Int32Array;
}

export function crossedLogLik(groups: readonly CrossedGroup[], years: number, siteTau2: number, trialTau2: number, yearTau2: number, kind: LikelihoodKind): SiteTrialFit {
  const m = years + 2; // columns: 0 = ones, 1 = y, 2.. = year indicators
  const G = new Float64Array(m * m);
  const sums = new Float64Array(m);
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
    const B: Matrix = zeros(years, years);
    for (let a = 0; a < years; a++) for (let b = 0; b < years; b++) B.data[a * years + b] = (a === b ? 1 : 0) + yearTau2 * at(2 + a, 2 + b);
    const L = cholesky(B);
    logDet += cholLogDet(L);
    const z1 = Float64Array.from({ length: years }, (_, a) => at(0, 2 + a));
    const zy = Float64Array.from({ length: years }, (_, a) => at(1, 2 + a));
    const s1 = cholSolve(L, z1);
    const sy = cholSolve(L, zy);
    let d11 = 0;
    let d1y = 0;
    let dyy = 0;
    for (let a = 0; a < years; a++) {
      d11 += z1[a] * s1[a];
      d1y += z1[a] * sy[a];
      dyy += zy[a] * sy[a];
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
