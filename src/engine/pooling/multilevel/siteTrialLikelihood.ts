// The likelihood of trial contrasts nested in sites: y_ij = mu + a_i + b_ij + e_ij with
// a_i ~ N(0, siteTau2) (site), b_ij ~ N(0, trialTau2) (trial within site) and e_ij ~ N(0, v_ij)
// (the trial's own sampling variance, taken as known). V is block-diagonal by site and each
// block is diag(v + trialTau2) + siteTau2 J, so its inverse and determinant come from the
// Sherman–Morrison formula and the determinant lemma: O(trials) per evaluation, no matrix.

/** One site's trials: estimates and sampling variances. */
export interface SiteGroup {
  readonly site: string;
  readonly trials: readonly string[];
  readonly y: Float64Array;
  readonly v: Float64Array;
}

export interface SiteTrialFit {
  /** REML or ML log-likelihood with constants (as lme4 and a written-out Gaussian likelihood give it). */
  logLik: number;
  /** GLS mean at these variances. */
  mu: number;
  /** Var(mu) = 1 / sum over sites of 1'V⁻¹1. */
  muVariance: number;
}

export type LikelihoodKind = 'reml' | 'ml';

/** Per site at given variances: S = sum 1/d, T = sum y/d, U = sum y²/d, L = sum log d, d = v + trialTau2. */
interface SiteSums {
  S: number;
  T: number;
  U: number;
  L: number;
}

function siteSums(g: SiteGroup, trialTau2: number): SiteSums {
  let S = 0;
  let T = 0;
  let U = 0;
  let L = 0;
  for (let j = 0; j < g.y.length; j++) {
    const d = g.v[j] + trialTau2;
    const w = 1 / d;
    S += w;
    T += w * g.y[j];
    U += w * g.y[j] * g.y[j];
    L += Math.log(d);
  }
  return { S, T, U, L };
}

/** The log-likelihood and GLS mean at (siteTau2, trialTau2). */
export function siteTrialLogLik(groups: readonly SiteGroup[], siteTau2: number, trialTau2: number, kind: LikelihoodKind): SiteTrialFit {
  let n = 0;
  let logDet = 0;
  let c = 0; // 1'V⁻¹1
  let t = 0; // 1'V⁻¹y
  let q = 0; // y'V⁻¹y
  for (const g of groups) {
    const s = siteSums(g, trialTau2);
    const f = 1 + siteTau2 * s.S;
    n += g.y.length;
    logDet += s.L + Math.log(f);
    c += s.S / f;
    t += s.T / f;
    q += s.U - (siteTau2 * s.T * s.T) / f;
  }
  const mu = t / c;
  const rss = q - (t * t) / c; // r'V⁻¹r at the GLS mean
  const p = kind === 'reml' ? 1 : 0;
  const logLik = -0.5 * ((n - p) * Math.log(2 * Math.PI) + logDet + rss + (kind === 'reml' ? Math.log(c) : 0));
  return { logLik, mu, muVariance: 1 / c };
}

/**
 * The site's best linear unbiased prediction of its own mean effect, mu + a_i, and its prediction
 * error variance (1 - siteTau2 c_i)² Var(mu) + siteTau2 - siteTau2² c_i, c_i = 1'V_i⁻¹1 (the two
 * error parts are uncorrelated; Henderson 1975).
 */
export function siteBlup(g: SiteGroup, siteTau2: number, trialTau2: number, mu: number, muVariance: number): { estimate: number; variance: number } {
  const s = siteSums(g, trialTau2);
  const f = 1 + siteTau2 * s.S;
  const ci = s.S / f;
  const a = (siteTau2 * (s.T - mu * s.S)) / f;
  const shrink = 1 - siteTau2 * ci;
  return { estimate: mu + a, variance: shrink * shrink * muVariance + siteTau2 - siteTau2 * siteTau2 * ci };
}
