// Each trial's contrasts two ways: the BLUP from the one-stage fit (l'beta + l'u_T,i, where
// u_T,i = sigma2_TxT Z_T'V^-1 r are the trial's predicted treatment-by-trial effects; the trial
// and block effects cancel because contrast coefficients sum to zero) and the trial's own
// fixed-effects estimate (blocks + treatments fitted to that trial alone, from its Gram matrix).
import { cholesky, cholInverse, cholSolve, NotPositiveDefiniteError, type Matrix } from '../linalg/index.js';
import { blockState, type Evaluation, type ModelFrame } from './remlCriterion.js';
import { residualCoordinates, symmetricMatVec } from './trialParameters.js';
import type { TrialContrastReport } from './types.js';

export interface ContrastVector {
  readonly name: string;
  /** Coefficient per fixed-effect treatment (already divided by the divisor); null if not estimable. */
  readonly l: Float64Array | null;
}

interface OwnFit {
  readonly tau: Float64Array; // per present treatment, relative to the first
  readonly cov: Float64Array; // unscaled covariance of tau (t x t, first row/col zero)
  readonly s2: number;
  readonly df: number;
}

function ownFit(frame: ModelFrame, i: number): OwnFit | null {
  const t = frame.stats.trials[i];
  const m = t.m;
  const K = t.gram;
  // columns: blocks, then treatments 2..t (treatment 1 absorbed by the block intercepts)
  const cols = [...t.blockColumns, ...Array.from(t.treatmentColumns).slice(1)];
  const k = cols.length;
  const nt = t.treatmentColumns.length;
  const df = t.n - k;
  if (nt < 2 || df <= 0) return null;
  const a: Matrix = { rows: k, cols: k, data: new Float64Array(k * k) };
  const b = new Float64Array(k);
  for (let x = 0; x < k; x++) {
    for (let y = 0; y < k; y++) a.data[x * k + y] = K[cols[x] * m + cols[y]];
    b[x] = K[cols[x] * m + t.yColumn];
  }
  let l: Matrix;
  try {
    l = cholesky(a);
  } catch (err) {
    if (err instanceof NotPositiveDefiniteError) return null; // disconnected design
    throw err;
  }
  const coef = cholSolve(l, b);
  let rss = K[t.yColumn * m + t.yColumn];
  for (let x = 0; x < k; x++) rss -= coef[x] * b[x];
  const inv = cholInverse(l).data;
  const nb = t.blockColumns.length;
  const tau = new Float64Array(nt);
  const cov = new Float64Array(nt * nt);
  for (let x = 1; x < nt; x++) {
    tau[x] = coef[nb + x - 1];
    for (let y = 1; y < nt; y++) cov[x * nt + y] = inv[(nb + x - 1) * k + nb + y - 1];
  }
  return { tau, cov, s2: Math.max(rss, 0) / df, df };
}

export function trialContrasts(frame: ModelFrame, ev: Evaluation, contrasts: readonly ContrastVector[], treatmentTrialVariance: number): { trial: string; contrasts: TrialContrastReport[] }[] {
  const p = frame.stats.treatments.length;
  return frame.stats.trials.map((t, i) => {
    const own = ownFit(frame, i);
    const rho = residualCoordinates(frame, i, ev.beta);
    const h = symmetricMatVec(blockState(frame, ev, i).h, t.m, rho);
    const local = new Int32Array(p).fill(-1);
    t.treatmentIndex.forEach((g, a) => (local[g] = a));
    const out = contrasts.map((c): TrialContrastReport => {
      if (!c.l) return { name: c.name, blup: null, raw: null, rawSe: null, rawDf: null };
      let blup = 0;
      let estimable = true;
      for (let j = 0; j < p; j++) {
        if (c.l[j] === 0) continue;
        const a = local[j];
        const u = a >= 0 && treatmentTrialVariance > 0 ? treatmentTrialVariance * h[t.treatmentColumns[a]] : 0;
        blup += c.l[j] * (ev.beta[j] + u);
        if (a < 0) estimable = false;
      }
      if (!estimable || !own) return { name: c.name, blup, raw: null, rawSe: null, rawDf: null };
      const nt = t.treatmentColumns.length;
      const ll = new Float64Array(nt);
      for (let a = 0; a < nt; a++) ll[a] = c.l[t.treatmentIndex[a]];
      let raw = 0;
      let v = 0;
      for (let a = 0; a < nt; a++) {
        raw += ll[a] * own.tau[a];
        for (let b = 0; b < nt; b++) v += ll[a] * own.cov[a * nt + b] * ll[b];
      }
      return { name: c.name, blup, raw, rawSe: Math.sqrt(own.s2 * v), rawDf: own.df };
    });
    return { trial: t.trial, contrasts: out };
  });
}
