// Start values. Residual: each trial's own within-trial variance (blocks + treatments fitted to
// that trial alone), pooled over trials for a common residual. Random terms: the rest of the
// pooled within-treatment variance split equally among them (at least a tenth of the residual).
// Cheap, scale-aware, and close enough that the EM warm start and AI steps converge quickly.
import { cholesky, forwardSolveInPlace, NotPositiveDefiniteError, type Matrix } from '../linalg/index.js';
import type { ModelFrame } from './remlCriterion.js';
import type { TrialStatistics } from './sufficientStatistics.js';

export function startValues(frame: ModelFrame): Float64Array {
  const { stats, layout } = frame;
  const p = stats.treatments.length;
  const sum = new Float64Array(p);
  const count = new Float64Array(p);
  let ss = 0;
  for (const t of stats.trials) {
    const m = t.m;
    ss += t.gram[t.yColumn * m + t.yColumn];
    for (let a = 0; a < t.treatmentCount; a++) {
      const c = t.fixedColumns[a];
      sum[t.fixedIndex[a]] += t.gram[c * m + t.yColumn];
      count[t.fixedIndex[a]] += t.gram[c * m + c];
    }
  }
  for (let j = 0; j < p; j++) if (count[j] > 0) ss -= (sum[j] * sum[j]) / count[j];
  const total = Math.max(ss / Math.max(stats.nObservations - p, 1), 1e-8);
  // within-trial residual variances, computed once per design pattern's inverse
  let rssAll = 0;
  let dfAll = 0;
  // per design (numbered 0, 1, ... in frame.designOf): the factor of its own normal equations
  const factors: (OwnFactor | null | undefined)[] = [];
  const work = new Float64Array(stats.trials.reduce((mx, t) => Math.max(mx, t.m), 1));
  // each trial's own residual sum of squares and df (df 0: no estimate)
  const ownRss = new Float64Array(stats.trials.length);
  const ownDf = new Float64Array(stats.trials.length);
  for (let i = 0; i < stats.trials.length; i++) {
    const t = stats.trials[i];
    const d = frame.designOf[i];
    let f = factors[d];
    if (f === undefined) factors[d] = f = withinFactor(t);
    if (!f) continue;
    ownRss[i] = withinRss(t, f, work);
    ownDf[i] = t.n - f.cols.length;
    rssAll += ownRss[i];
    dfAll += ownDf[i];
  }
  const pooled = dfAll > 0 ? rssAll / dfAll : total / 2;
  const nTerms = layout.termParameter.filter((k) => k >= 0).length;
  const share = nTerms > 0 ? Math.max((total - pooled) / nTerms, 0.1 * pooled) : 0;
  const theta = new Float64Array(layout.parameters.length);
  layout.parameters.forEach((par, k) => {
    if (par.kind === 'term') theta[k] = share;
    else if (par.trial < 0) theta[k] = pooled;
    else theta[k] = ownDf[par.trial] > 0 && ownRss[par.trial] > 0 ? ownRss[par.trial] / ownDf[par.trial] : pooled;
  });
  return theta;
}

function ownColumns(t: TrialStatistics): number[] {
  return [...t.blockColumns, ...Array.from(t.fixedColumns).slice(1, t.treatmentCount)];
}

/** Columns and Cholesky factor of a trial's own normal equations (blocks + treatments); design only. */
interface OwnFactor {
  readonly cols: number[];
  readonly l: Matrix;
}

function withinFactor(t: TrialStatistics): OwnFactor | null {
  const cols = ownColumns(t);
  const k = cols.length;
  if (t.n - k <= 0) return null;
  const a: Matrix = { rows: k, cols: k, data: new Float64Array(k * k) };
  for (let x = 0; x < k; x++) for (let y = 0; y < k; y++) a.data[x * k + y] = t.gram[cols[x] * t.m + cols[y]];
  try {
    return { cols, l: cholesky(a) };
  } catch (err) {
    if (err instanceof NotPositiveDefiniteError) return null;
    throw err;
  }
}

/** The trial's own residual sum of squares y'y - b'A^-1 b (b its X'y on the factor's columns), at least 0. */
function withinRss(t: TrialStatistics, f: OwnFactor, work: Float64Array): number {
  const cols = f.cols;
  const k = cols.length;
  const m = t.m;
  // `work` holds b, then L^-1 b; b'A^-1 b = |L^-1 b|^2
  for (let x = 0; x < k; x++) work[x] = t.gram[cols[x] * m + t.yColumn];
  forwardSolveInPlace(f.l, work);
  let fit = 0;
  for (let x = 0; x < k; x++) fit += work[x] * work[x];
  return Math.max(t.gram[t.yColumn * m + t.yColumn] - fit, 0);
}
