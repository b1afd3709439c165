// Each trial's own fixed-effects estimate of a contrast, with its SE, for the crossed model's
// new-site-in-a-new-year bootstrap: blocks (or one intercept) and treatments fitted to that trial
// alone by least squares, the SE from the trial's own residual variance. Under the crossed
// one-stage model this estimate is l'beta + the trial's treatment-by-site, -by-year and -by-trial
// parts + sampling error, so across trials it follows the two-stage crossed model with the
// contrast's variance parts (sum l² times each term's variance) and the trial's SE² as known
// sampling variance. A trial that lacks a treatment of the contrast, or has no residual df, gives
// none.
import type { CrossedData, CrossedTrial } from './crossedData.js';
import { backSolveTranspose, choleskyInPlace, forwardSolve } from './denseSmall.js';

export interface OwnEstimate {
  estimate: number;
  se: number;
}

/** Per trial (in d.trials order), per contrast: the trial's own estimate, or null. */
export function trialOwnContrasts(d: CrossedData, ls: readonly (Float64Array | null)[]): (OwnEstimate | null)[][] {
  return d.trials.map((tr) => ownInTrial(tr, d.treatments.length, ls));
}

function ownInTrial(tr: CrossedTrial, nTreatments: number, ls: readonly (Float64Array | null)[]): (OwnEstimate | null)[] {
  const present: number[] = [];
  const seen = new Uint8Array(nTreatments);
  for (const j of tr.treatment) if (!seen[j]) (seen[j] = 1), present.push(j);
  present.sort((a, b) => a - b);
  const nb = Math.max(1, tr.nBlocks);
  // columns: one per block (the intercepts), then treatments present but the first (absorbed)
  const k = nb + present.length - 1;
  const n = tr.y.length;
  const df = n - k;
  const none = ls.map(() => null);
  if (present.length < 2 || df <= 0) return none;
  const col = new Int32Array(nTreatments).fill(-1);
  present.forEach((j, a) => (col[j] = a === 0 ? -1 : nb + a - 1));
  const xtx = new Float64Array(k * k);
  const xty = new Float64Array(k);
  let yy = 0;
  for (let i = 0; i < n; i++) {
    const b = Math.max(0, tr.block[i]);
    const c = col[tr.treatment[i]];
    const y = tr.y[i];
    yy += y * y;
    xtx[b * k + b] += 1;
    xty[b] += y;
    if (c >= 0) {
      xtx[c * k + c] += 1;
      xtx[b * k + c] += 1;
      xtx[c * k + b] += 1;
      xty[c] += y;
    }
  }
  if (!choleskyInPlace(xtx, k)) return none; // blocks and treatments confounded
  const coef = Float64Array.from(xty);
  forwardSolve(xtx, k, k, coef);
  let fitted = 0;
  for (const v of coef) fitted += v * v;
  const s2 = Math.max(yy - fitted, 0) / df;
  backSolveTranspose(xtx, k, k, coef);
  return ls.map((l) => {
    if (!l) return null;
    let sum = 0;
    const a = new Float64Array(k);
    for (let j = 0; j < nTreatments; j++) {
      if (l[j] === 0) continue;
      if (!seen[j]) return null;
      sum += l[j];
      if (col[j] >= 0) a[col[j]] = l[j];
    }
    // a contrast's coefficients sum to zero, so the absorbed first treatment drops out
    if (Math.abs(sum) > 1e-9 * l.reduce((s, x) => s + Math.abs(x), 0)) return null;
    let estimate = 0;
    for (let c = 0; c < k; c++) estimate += a[c] * coef[c];
    forwardSolve(xtx, k, k, a);
    let q = 0;
    for (const v of a) q += v * v;
    return { estimate, se: Math.sqrt(s2 * q) };
  });
}
