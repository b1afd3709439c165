// What the REML derivatives need of one layout of plots beyond its likelihood pieces: with
// J = [K | B] (K = [1 | T] the trial's ones and treatment indicators, B its block indicators),
// the Gram matrix J'H0^-1 J, and for each within-trial term (trial, block, treatment-by-trial,
// with indicator matrix Z) the trace tr(Z'H0^-1 Z) and S = (K'H0^-1 Z)(Z'H0^-1 K). Computed once
// per layout per evaluation: trials with the same layout share them.
import type { CrossedTrial } from './crossedData.js';
import type { LayoutFactor } from './crossedLikelihood.js';
import { forwardSolveColumns } from './denseSmall.js';

export interface LayoutMoments {
  /** m + nBlocks: the size of J. */
  readonly j: number;
  readonly nBlocks: number;
  /** J'H0^-1 J, j x j. */
  readonly gram: Float64Array;
  /** L^-1 B, n x nBlocks (L the factor of H0). */
  readonly lb: Float64Array;
  /** tr(Z'H0^-1 Z) for trial, block, treatment-by-trial. */
  readonly trace: { readonly trial: number; readonly block: number; readonly treatment: number };
  /** (K'H0^-1 Z)(Z'H0^-1 K), m x m, for the same three. */
  readonly s: { readonly trial: Float64Array; readonly block: Float64Array; readonly treatment: Float64Array };
}

export function layoutMoments(tr: CrossedTrial, f: LayoutFactor, m: number): LayoutMoments {
  const n = tr.y.length;
  const nB = tr.nBlocks;
  const lb = new Float64Array(n * nB);
  for (let i = 0; i < n; i++) if (tr.block[i] >= 0) lb[i * nB + tr.block[i]] = 1;
  if (nB > 0) forwardSolveColumns(f.l, n, lb, nB);
  const j = m + nB;
  const gram = new Float64Array(j * j);
  for (let r = 0; r < m; r++) for (let c = 0; c < m; c++) gram[r * j + c] = f.a[r * m + c];
  // K'H0^-1 B = (L^-1 K)'(L^-1 B); B'H0^-1 B = (L^-1 B)'(L^-1 B)
  for (let i = 0; i < n; i++)
    for (let b = 0; b < nB; b++) {
      const x = lb[i * nB + b];
      if (x === 0) continue;
      for (let r = 0; r < m; r++) gram[r * j + m + b] += f.lk[i * m + r] * x;
      for (let c = 0; c < nB; c++) gram[(m + b) * j + m + c] += x * lb[i * nB + c];
    }
  for (let r = 0; r < m; r++) for (let b = 0; b < nB; b++) gram[(m + b) * j + r] = gram[r * j + m + b];
  const outer = (cols: number[]): Float64Array => {
    const s = new Float64Array(m * m);
    for (const c of cols) for (let r = 0; r < m; r++) for (let q = 0; q < m; q++) s[r * m + q] += gram[r * j + c] * gram[q * j + c];
    return s;
  };
  const treatmentCols = Array.from({ length: m - 1 }, (_, k) => 1 + k);
  const blockCols = Array.from({ length: nB }, (_, b) => m + b);
  let tTreat = 0;
  for (const c of treatmentCols) tTreat += gram[c * j + c];
  let tBlock = 0;
  for (const c of blockCols) tBlock += gram[c * j + c];
  return {
    j,
    nBlocks: nB,
    gram,
    lb,
    trace: { trial: gram[0], block: tBlock, treatment: tTreat },
    s: { trial: outer([0]), block: outer(blockCols), treatment: outer(treatmentCols) },
  };
}
