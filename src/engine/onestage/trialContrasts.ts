// Each trial's contrasts two ways: the BLUP from the one-stage fit (l'beta + l'u_T,i, where
// u_T,i = sigma2_TxT Z_T'V^-1 r are the trial's predicted treatment-by-trial effects; the trial
// and block effects cancel because contrast coefficients sum to zero) and the trial's own
// fixed-effects estimate (blocks + treatments fitted to that trial alone, from its Gram matrix).
import { cholesky, cholInverse, NotPositiveDefiniteError, type Matrix } from '../linalg/index.js';
import type { Evaluation, ModelFrame } from './remlCriterion.js';
import { spectralTreatmentResiduals } from './spectralContrasts.js';
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
  const cols = [...t.blockColumns, ...Array.from(t.fixedColumns).slice(1, t.treatmentCount)];
  const k = cols.length;
  const df = t.n - k;
  if (t.treatmentCount < 2 || df <= 0) return null;
  const a: Matrix = { rows: k, cols: k, data: new Float64Array(k * k) };
  for (let x = 0; x < k; x++) for (let y = 0; y < k; y++) a.data[x * k + y] = K[cols[x] * m + cols[y]];
  try {
    return { cols, inv: cholInverse(cholesky(a)).data, df };
  } catch (err) {
    if (err instanceof NotPositiveDefiniteError) return null; // disconnected design
    throw err;
  }
}

/** A contrast's raw estimate in trials of one design: raw = a'b (b = Z'y on the own columns), Var = s2 v. */
interface DesignContrast {
  readonly a: Float64Array;
  readonly v: number;
}

/** A contrast's BLUP in trials of one pattern: lb + sigma2_TxT (g'u - g0), u = Z'y; null where a treatment is absent. */
interface PatternContrast {
  readonly g: Float64Array;
  readonly g0: number;
  readonly estimable: boolean;
}

// Everything but the data is shared by the trials of a design (own fit) or a pattern (BLUP), so
// it is worked out once per design or pattern as a linear function of the trial's Z'y; each
// trial then costs a few dot products.
export function trialContrasts(frame: ModelFrame, ev: Evaluation, contrasts: readonly ContrastVector[], treatmentTrialVariance: number): { trial: string; contrasts: TrialContrastReport[] }[] {
  const p = frame.stats.fixed.length;
  const lb = contrasts.map((c) => (c.l ? dot(c.l, ev.beta, p) : 0));
  const designs = new Map<number, { own: OwnDesign | null; byContrast: (DesignContrast | null)[] }>();
  const patterns = new Map<number, (PatternContrast | null)[]>();
  const maxM = frame.stats.trials.reduce((mx, t) => Math.max(mx, t.m), 1);
  const b = new Float64Array(maxM);
  // trials evaluated through their layout's decomposition carry l'h_T directly
  const spectral = spectralTreatmentResiduals(frame, ev);
  return frame.stats.trials.map((t, i) => {
    const d = frame.designOf[i];
    let design = designs.get(d);
    if (!design) designs.set(d, (design = designContrasts(frame, i, contrasts)));
    const q = frame.patternOf[i];
    const hT = spectral.get(i);
    let pattern = patterns.get(q);
    if (!pattern) patterns.set(q, (pattern = hT ? estimability(t, contrasts, p) : patternContrasts(frame, ev, q, contrasts)));
    const m = t.m;
    const mz = m - 1;
    // the trial's own residual variance: (y'y - b'A^-1 b) / df
    const own = design.own;
    let s2 = NaN;
    if (own) {
      const k = own.cols.length;
      for (let x = 0; x < k; x++) b[x] = t.gram[own.cols[x] * m + mz];
      s2 = Math.max(t.gram[mz * m + mz] - quadratic(own.inv, b, k), 0) / own.df;
    }
    const out = contrasts.map((c, ci): TrialContrastReport => {
      const pc = pattern[ci];
      if (!c.l || !pc) return { name: c.name, blup: null, raw: null, rawSe: null, rawDf: null };
      const deviation = hT ? fixedDot(c.l, hT, t) : columnDot(pc.g, t.gram, m, mz) - pc.g0;
      const blup = treatmentTrialVariance > 0 ? lb[ci] + treatmentTrialVariance * deviation : lb[ci];
      const dc = design.byContrast[ci];
      if (!pc.estimable || !own || !dc) return { name: c.name, blup, raw: null, rawSe: null, rawDf: null };
      return { name: c.name, blup, raw: dot(dc.a, b, own.cols.length), rawSe: Math.sqrt(s2 * dc.v), rawDf: own.df };
    });
    return { trial: t.trial, contrasts: out };
  });
}

/** The design's own fit and, per contrast, the raw estimate's coefficients on b and its variance factor. */
function designContrasts(frame: ModelFrame, i: number, contrasts: readonly ContrastVector[]): { own: OwnDesign | null; byContrast: (DesignContrast | null)[] } {
  const own = ownDesign(frame, i);
  const t = frame.stats.trials[i];
  const nt = t.treatmentCount;
  const byContrast = contrasts.map((c): DesignContrast | null => {
    if (!own || !c.l) return null;
    const k = own.cols.length;
    const nb = k - (nt - 1);
    // tau[a] = (A^-1 b)[nb + a - 1] for treatments a >= 1 (treatment 0 is absorbed): raw = sum_a l_a tau[a]
    const a = new Float64Array(k);
    let v = 0;
    for (let x = 1; x < nt; x++) {
      const lx = c.l[t.fixedIndex[x]];
      if (lx === 0) continue;
      for (let y = 0; y < k; y++) a[y] += lx * own.inv[(nb + x - 1) * k + y];
      for (let z = 1; z < nt; z++) v += lx * own.inv[(nb + x - 1) * k + nb + z - 1] * c.l[t.fixedIndex[z]];
    }
    return { a, v };
  });
  return { own, byContrast };
}

/**
 * Per contrast, the BLUP's dependence on u = Z'y in trials of pattern q: sum over the contrast's
 * treatments present of l_j h_j, h = (B'V^-1 r) on the treatment column,
 * h_col = (u_col - gz_col. u_R) / sigma2 - H_col,T beta_T.
 */
function patternContrasts(frame: ModelFrame, ev: Evaluation, q: number, contrasts: readonly ContrastVector[]): (PatternContrast | null)[] {
  const t = frame.stats.trials[frame.patternTrial[q]];
  const pat = ev.patterns[q];
  const p = frame.stats.fixed.length;
  const mz = t.m - 1;
  const nt = t.treatmentCount;
  const nf = t.fixedColumns.length;
  const R = pat.randomColumns;
  const r = R.length;
  const local = new Int32Array(p).fill(-1);
  for (let a = 0; a < nt; a++) local[t.fixedIndex[a]] = a;
  return contrasts.map((c): PatternContrast | null => {
    if (!c.l) return null;
    const g = new Float64Array(mz);
    let g0 = 0;
    let estimable = true;
    for (let j = 0; j < p; j++) {
      const lj = c.l[j];
      if (lj === 0) continue;
      const a = local[j];
      if (a < 0) {
        estimable = false;
        continue;
      }
      const col = t.fixedColumns[a];
      g[col] += lj / pat.sigma2;
      for (let x = 0; x < r; x++) g[R[x]] -= (lj * pat.gz[col * r + x]) / pat.sigma2;
      // r = y - X beta over every fixed column (treatments and covariates)
      for (let x = 0; x < nf; x++) g0 += lj * pat.hzz[col * mz + t.fixedColumns[x]] * ev.beta[t.fixedIndex[x]];
    }
    return { g, g0, estimable };
  });
}

/** For trials without a pattern block: only whether each contrast's treatments are all present. */
function estimability(t: ModelFrame['stats']['trials'][number], contrasts: readonly ContrastVector[], p: number): (PatternContrast | null)[] {
  const present = new Uint8Array(p);
  for (let a = 0; a < t.treatmentCount; a++) present[t.fixedIndex[a]] = 1;
  return contrasts.map((c) => (c.l ? { g: new Float64Array(0), g0: 0, estimable: c.l.every((v, j) => v === 0 || present[j] === 1) } : null));
}

/** l'h over the trial's treatments (h indexed like its fixed columns). */
function fixedDot(l: Float64Array, h: Float64Array, t: ModelFrame['stats']['trials'][number]): number {
  let s = 0;
  for (let a = 0; a < t.treatmentCount; a++) s += l[t.fixedIndex[a]] * h[a];
  return s;
}

function dot(a: ArrayLike<number>, b: ArrayLike<number>, n: number): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += a[i] * b[i];
  return s;
}

/** g'u with u the y column of the trial's Gram matrix (its first mz entries). */
function columnDot(g: Float64Array, gram: Float64Array, m: number, mz: number): number {
  let s = 0;
  for (let j = 0; j < mz; j++) s += g[j] * gram[j * m + mz];
  return s;
}

/** b'A b for a symmetric k x k A. */
function quadratic(a: Float64Array, b: Float64Array, k: number): number {
  let s = 0;
  for (let x = 0; x < k; x++) {
    let r = 0;
    for (let y = 0; y < k; y++) r += a[x * k + y] * b[y];
    s += b[x] * r;
  }
  return s;
}
