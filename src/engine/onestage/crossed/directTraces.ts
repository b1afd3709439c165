// Traces tr(P Z_k Z_k') of the site and year terms level by level, for ratios near zero where the
// shortcut through the diagonal of C^-1 loses its digits (crossedDerivatives.ts).
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import type { CrossedEvaluation, PackedColumns } from './crossedLikelihood.js';
import { siteForward } from './arrowheadInverse.js';
import { forwardSolve } from './denseSmall.js';

/** Variance ratios below this take the direct route to their trace (no cancellation). */
export const DIRECT_BELOW = 1e-2;

/**
 * Traces of shared terms level by level: z'H0^-1 z - |L^-1 g|², g = A'H0^-1 z = the sum over the
 * level's trials of M_i' a_i[:, r] (a year's level runs through every site of that year).
 */
export function directTraces(
  d: CrossedData,
  L: CrossedLayout,
  ev: CrossedEvaluation,
  columns: readonly PackedColumns[],
  trialsOfSite: readonly number[][],
  siteLevels: readonly number[][],
  yearLevels: readonly number[][],
  trace: Float64Array,
): void {
  if (siteLevels.length === 0 && yearLevels.length === 0) return;
  const m = 1 + L.t;
  const B = L.border;
  const nb = B - 1;
  const bs = L.bs;
  const f = ev.factor;
  const nY = yearLevels.length;
  const yearBorder = Array.from({ length: L.nYears * nY }, () => new Float64Array(nb));
  const yearSq = new Float64Array(L.nYears * nY);
  const yearZhz = new Float64Array(L.nYears * nY);
  const gs = new Float64Array(bs);
  const gb = new Float64Array(nb);
  for (let s = 0; s < L.nSites; s++) {
    const mine = trialsOfSite[s];
    for (const [term, r] of siteLevels) {
      gs.fill(0);
      gb.fill(0);
      let zhz = 0;
      for (const i of mine) {
        const a = ev.pieces[i].a;
        const cols = columns[d.trials[i].year];
        zhz += a[r * m + r];
        for (let c = 0; c < cols.n; c++) {
          const v = cols.value[c] * a[cols.row[c] * m + r];
          if (cols.inSite[c]) gs[cols.index[c]] += v;
          else gb[cols.index[c]] += v;
        }
      }
      let sq = bs > 0 ? siteForward(L, f, s, gs, gb) : 0;
      forwardSolve(f.borderFactor, B, nb, gb);
      for (let x = 0; x < nb; x++) sq += gb[x] * gb[x];
      trace[term] += zhz - sq;
    }
    for (let yl = 0; yl < nY; yl++) {
      const r = yearLevels[yl][1];
      // trials of this site grouped by year: one site part per (year, level)
      const byYear = new Map<number, Float64Array>();
      for (const i of mine) {
        const tr = d.trials[i];
        const a = ev.pieces[i].a;
        const cols = columns[tr.year];
        const slot = tr.year * nY + yl;
        yearZhz[slot] += a[r * m + r];
        let g = byYear.get(tr.year);
        if (!g) byYear.set(tr.year, (g = new Float64Array(bs)));
        const border = yearBorder[slot];
        for (let c = 0; c < cols.n; c++) {
          const v = cols.value[c] * a[cols.row[c] * m + r];
          if (cols.inSite[c]) g[cols.index[c]] += v;
          else border[cols.index[c]] += v;
        }
      }
      if (bs > 0) for (const [y, g] of byYear) yearSq[y * nY + yl] += siteForward(L, f, s, g, yearBorder[y * nY + yl]);
    }
  }
  for (let y = 0; y < L.nYears; y++)
    for (let yl = 0; yl < nY; yl++) {
      const slot = y * nY + yl;
      const border = yearBorder[slot];
      forwardSolve(f.borderFactor, B, nb, border);
      let sq = yearSq[slot];
      for (let x = 0; x < nb; x++) sq += border[x] * border[x];
      trace[yearLevels[yl][0]] += yearZhz[slot] - sq;
    }
}
