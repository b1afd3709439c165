// Each trial's contrasts two ways: the BLUP from the one-stage fit (l'beta + l'u_T,i, where
// u_T,i = sigma2_TxT Z_T'V^-1 r are the trial's predicted treatment-by-trial effects; the trial
// and block effects cancel because contrast coefficients sum to zero) and the trial's own
// fixed-effects estimate (blocks + treatments fitted to that trial alone, from its Gram matrix).
import { cholesky, cholInverse, NotPositiveDefiniteError, type Matrix } from '../linalg/index.js';
import { designRowsOfHy, type Evaluation, type ModelFrame } from './remlCriterion.js';
import type { TrialContrastReport } from './types.js';

export interface ContrastVector {
  readonly name: string;
  /** Coefficient per fixed-effect treatment (already divided by the divisor); null if not estimable. */
  readonly l: Float64Array | null;
}

/** The design-only part of a trial's own fit: inverse normal equations on its columns. */
interface OwnDesign {
  readonly cols: number[];
  readonly inv: Float64Array;
  readonly df: number;
}

function ownDesign(frame: ModelFrame, i: number): OwnDesign | null {
  const t = frame.stats.trials[i];
  const m = t.m;
  const K = t.gram;
  // columns: blocks, then treatments 2..t (treatment 1 absorbed by the block intercepts)
  const cols = [...t.blockColumns, ...Array.from(t.treatmentColumns).slice(1)];
  const k = cols.length;
  const df = t.n - k;
  if (t.treatmentColumns.length < 2 || df <= 0) return null;
  const a: Matrix = { rows: k, cols: k, data: new Float64Array(k * k) };
  for (let x = 0; x < k; x++) for (let y = 0; y < k; y++) a.data[x * k + y] = K[cols[x] * m + cols[y]];
  try {
    return { cols, inv: cholInverse(cholesky(a)).data, df };
  } catch (err) {
    if (err instanceof NotPositiveDefiniteError) return null; // disconnected design
    throw err;
  }
}

export function trialContrasts(frame: ModelFrame, ev: Evaluation, contrasts: readonly ContrastVector[], treatmentTrialVariance: number): { trial: string; contrasts: TrialContrastReport[] }[] {
  const p = frame.stats.treatments.length;
  const designs = new Map<number, OwnDesign | null>();
  const local = new Int32Array(p);
  const maxM = frame.stats.trials.reduce((mx, t) => Math.max(mx, t.m), 1);
  const u = new Float64Array(maxM);
  const hzy = new Float64Array(maxM);
  // per-trial working vectors, reused (a trial's values are consumed before the next trial)
  const tau = new Float64Array(maxM);
  const b = new Float64Array(maxM);
  return frame.stats.trials.map((t, i) => {
    const q = frame.patternOf[i];
    const d = frame.designOf[i];
    if (!designs.has(d)) designs.set(d, ownDesign(frame, i));
    const own = designs.get(d)!;
    const m = t.m;
    const mz = m - 1;
    const nt = t.treatmentColumns.length;
    // the trial's own estimates: tau (treatment 1 = 0), residual variance
    tau.fill(0, 0, nt);
    let s2 = NaN;
    if (own) {
      const k = own.cols.length;
      for (let x = 0; x < k; x++) b[x] = t.gram[own.cols[x] * m + mz];
      let rss = t.gram[mz * m + mz];
      const nb = k - (nt - 1);
      for (let x = 0; x < k; x++) {
        let s = 0;
        for (let y = 0; y < k; y++) s += own.inv[x * k + y] * b[y];
        rss -= s * b[x];
        if (x >= nb) tau[x - nb + 1] = s;
      }
      s2 = Math.max(rss, 0) / own.df;
    }
    // h_T = (B'V^-1 r)_T, for the predicted treatment-by-trial effects
    const pat = ev.patterns[q];
    for (let j = 0; j < mz; j++) u[j] = t.gram[j * m + mz];
    designRowsOfHy(u, pat, mz, hzy);
    local.fill(-1);
    for (let a = 0; a < nt; a++) local[t.treatmentIndex[a]] = a;
    const out = contrasts.map((c): TrialContrastReport => {
      if (!c.l) return { name: c.name, blup: null, raw: null, rawSe: null, rawDf: null };
      let blup = 0;
      let estimable = true;
      for (let j = 0; j < p; j++) {
        if (c.l[j] === 0) continue;
        const a = local[j];
        let u = 0;
        if (a >= 0 && treatmentTrialVariance > 0) {
          const col = t.treatmentColumns[a];
          let h = hzy[col];
          for (let x = 0; x < nt; x++) h -= pat.hzz[col * mz + t.treatmentColumns[x]] * ev.beta[t.treatmentIndex[x]];
          u = treatmentTrialVariance * h;
        }
        blup += c.l[j] * (ev.beta[j] + u);
        if (a < 0) estimable = false;
      }
      if (!estimable || !own) return { name: c.name, blup, raw: null, rawSe: null, rawDf: null };
      const k = own.cols.length;
      const nb = k - (nt - 1);
      let raw = 0;
      let v = 0;
      for (let a = 1; a < nt; a++) {
        const la = c.l[t.treatmentIndex[a]];
        raw += la * tau[a];
        for (let b = 1; b < nt; b++) v += la * own.inv[(nb + a - 1) * k + nb + b - 1] * c.l[t.treatmentIndex[b]];
      }
      return { name: c.name, blup, raw, rawSe: Math.sqrt(s2 * v), rawDf: own.df };
    });
    return { trial: t.trial, contrasts: out };
  });
}
