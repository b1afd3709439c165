// H^-1 of the crossed model (H = V / sigma², plots x plots) in a form that never holds n x n:
// with A the shared effects' columns (site and year terms, scaled by theta) and M = I + A'H0^-1 A
// factored as the leading part of the arrowhead (sites, then the year rows of its border),
//   H^-1 = H0^-1 - (L_M^-1 A'H0^-1)'(L_M^-1 A'H0^-1).
// Column c of T = L_M^-1 A'H0^-1 has a site part (its site's bs rows) and a year part (q rows),
// so H^-1 = E - U U': E block-diagonal by site (H0^-1 less the site parts' products, one dense
// n_s x n_s block per site) and U = the year parts (n x q), q = years x year effects, small.
// Without site terms the blocks are the trials. Everything Kenward–Roger needs of H^-1
// (crossedKenwardRoger.ts) is read through E's blocks and U.
import type { CrossedData } from './crossedData.js';
import { localColumns, type CrossedLayout } from './crossedLayout.js';
import { pack, type CrossedEvaluation, type PackedColumns } from './crossedLikelihood.js';
import { siteForward } from './arrowheadInverse.js';
import { backSolveTranspose, forwardSolve } from './denseSmall.js';

export interface InverseParts {
  readonly n: number;
  /** Year effects in the border (columns of U). */
  readonly q: number;
  /** Plots of each group, consecutive: group g holds plots start[g] .. start[g + 1] - 1. */
  readonly start: Int32Array;
  /** Per group its block of E, n_g x n_g row-major. */
  readonly e: readonly Float64Array[];
  /** The same block as D - F F': per trial of the group H0_i^-1 (n_i x n_i, at plot `offset` of the group), and F (n_g x bs). */
  readonly h0: readonly { readonly offset: number; readonly size: number; readonly inverse: Float64Array }[][];
  readonly f: readonly Float64Array[];
  readonly bs: number;
  /** n x q row-major. */
  readonly u: Float64Array;
  /** Per plot (in group order): trial index, plot index within the trial. */
  readonly trialOf: Int32Array;
  readonly plotInTrial: Int32Array;
}

/** The largest block of E the dense route takes (its square is held per block). */
export const MAX_BLOCK_PLOTS = 3000;

export function largestBlock(d: CrossedData, L: CrossedLayout): number {
  const sizes = new Map<number, number>();
  d.trials.forEach((tr, i) => {
    const g = L.bs > 0 ? tr.site : i;
    sizes.set(g, (sizes.get(g) ?? 0) + tr.y.length);
  });
  return Math.max(0, ...sizes.values());
}

export function inverseParts(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation): InverseParts {
  const B = L.border;
  const nb = B - 1;
  const bs = L.bs;
  const q = L.q;
  const m = 1 + L.t;
  const f = ev.factor;
  const groupOf = (i: number) => (bs > 0 ? d.trials[i].site : i);
  const nGroups = bs > 0 ? L.nSites : d.trials.length;
  const trialsOf: number[][] = Array.from({ length: nGroups }, () => []);
  d.trials.forEach((_, i) => trialsOf[groupOf(i)].push(i));
  const start = new Int32Array(nGroups + 1);
  for (let g = 0; g < nGroups; g++) start[g + 1] = start[g] + trialsOf[g].reduce((s, i) => s + d.trials[i].y.length, 0);
  const n = start[nGroups];
  const trialOf = new Int32Array(n);
  const plotInTrial = new Int32Array(n);
  const u = new Float64Array(n * q);
  const columns: PackedColumns[] = [];
  for (let y = 0; y < L.nYears; y++) columns.push(pack(localColumns(L, y, ev.theta)));
  const e: Float64Array[] = [];
  const h0: { offset: number; size: number; inverse: Float64Array }[][] = [];
  const fs: Float64Array[] = [];
  const gs = new Float64Array(bs);
  const gb = new Float64Array(nb);
  for (let g = 0; g < nGroups; g++) {
    const ng = start[g + 1] - start[g];
    const block = new Float64Array(ng * ng);
    const ts = new Float64Array(ng * bs); // site parts of T, one row per plot
    let offset = 0;
    const h0g: { offset: number; size: number; inverse: Float64Array }[] = [];
    for (const i of trialsOf[g]) {
      const tr = d.trials[i];
      const lf = ev.pieces[i].layout;
      const ni = tr.y.length;
      // H0_i^-1 = L^-T L^-1 into the block, and H0_i^-1 K (ni x m)
      const col = new Float64Array(ni);
      for (let c = 0; c < ni; c++) {
        col.fill(0);
        col[c] = 1;
        forwardSolve(lf.l, ni, ni, col);
        backSolveTranspose(lf.l, ni, ni, col);
        for (let r = 0; r < ni; r++) block[(offset + r) * ng + offset + c] = col[r];
      }
      const inverse = new Float64Array(ni * ni);
      for (let r = 0; r < ni; r++) for (let c = 0; c < ni; c++) inverse[r * ni + c] = block[(offset + r) * ng + offset + c];
      h0g.push({ offset, size: ni, inverse });
      const hk = new Float64Array(ni * m);
      for (let r = 0; r < m; r++) {
        for (let p = 0; p < ni; p++) col[p] = lf.lk[p * m + r];
        backSolveTranspose(lf.l, ni, ni, col);
        for (let p = 0; p < ni; p++) hk[p * m + r] = col[p];
      }
      const cols = columns[tr.year];
      for (let c = 0; c < ni; c++) {
        const plot = start[g] + offset + c;
        trialOf[plot] = i;
        plotInTrial[plot] = c;
        // A'H0^-1 e_c through the trial's local columns, then L_M^-1 of it
        gs.fill(0);
        gb.fill(0);
        for (let a = 0; a < cols.n; a++) {
          const v = cols.value[a] * hk[c * m + cols.row[a]];
          if (a < bs) gs[cols.index[a]] += v;
          else gb[cols.index[a]] += v;
        }
        if (bs > 0) {
          siteForward(L, f, tr.site, gs, gb);
          ts.set(gs, (offset + c) * bs);
        }
        forwardSolve(f.borderFactor, B, q, gb);
        for (let k = 0; k < q; k++) u[plot * q + k] = gb[k];
      }
      offset += ni;
    }
    if (bs > 0)
      for (let a = 0; a < ng; a++)
        for (let b = 0; b <= a; b++) {
          let s = 0;
          for (let r = 0; r < bs; r++) s += ts[a * bs + r] * ts[b * bs + r];
          block[a * ng + b] -= s;
          if (b !== a) block[b * ng + a] -= s;
        }
    e.push(block);
    h0.push(h0g);
    fs.push(ts);
  }
  return { n, q, start, e, h0, f: fs, bs, u, trialOf, plotInTrial };
}

/** E x for x n x c row-major (block by block). */
export function applyE(parts: InverseParts, x: Float64Array, c: number): Float64Array {
  const out = new Float64Array(parts.n * c);
  for (let g = 0; g < parts.e.length; g++) applyEBlock(parts, g, x, out, c);
  return out;
}

/**
 * Rows of block g of E x into out (both n x c; the block's rows only), as D x - F (F'x): the
 * trials' H0^-1 and the rank-bs site part, cheaper than the dense block.
 */
export function applyEBlock(parts: InverseParts, g: number, x: Float64Array, out: Float64Array, c: number): void {
  const s0 = parts.start[g];
  const ng = parts.start[g + 1] - s0;
  for (const t of parts.h0[g]) {
    const k = t.size;
    for (let a = 0; a < k; a++) {
      const row = (s0 + t.offset + a) * c;
      for (let b = 0; b < k; b++) {
        const v = t.inverse[a * k + b];
        const xr = (s0 + t.offset + b) * c;
        for (let j = 0; j < c; j++) out[row + j] += v * x[xr + j];
      }
    }
  }
  const bs = parts.bs;
  if (bs === 0) return;
  const f = parts.f[g];
  const ftx = new Float64Array(bs * c);
  for (let a = 0; a < ng; a++) {
    const xr = (s0 + a) * c;
    for (let r = 0; r < bs; r++) {
      const v = f[a * bs + r];
      for (let j = 0; j < c; j++) ftx[r * c + j] += v * x[xr + j];
    }
  }
  for (let a = 0; a < ng; a++) {
    const row = (s0 + a) * c;
    for (let r = 0; r < bs; r++) {
      const v = f[a * bs + r];
      for (let j = 0; j < c; j++) out[row + j] -= v * ftx[r * c + j];
    }
  }
}

/** U'x (q x c) for x n x c. */
export function uTranspose(parts: InverseParts, x: Float64Array, c: number): Float64Array {
  const { n, q, u } = parts;
  const out = new Float64Array(q * c);
  for (let p = 0; p < n; p++)
    for (let k = 0; k < q; k++) {
      const v = u[p * q + k];
      if (v === 0) continue;
      for (let j = 0; j < c; j++) out[k * c + j] += v * x[p * c + j];
    }
  return out;
}

/** H^-1 x = E x - U (U'x), x n x c. */
export function applyHInverse(parts: InverseParts, x: Float64Array, c: number): Float64Array {
  const out = applyE(parts, x, c);
  const { n, q, u } = parts;
  if (q === 0) return out;
  const ux = uTranspose(parts, x, c);
  for (let p = 0; p < n; p++)
    for (let k = 0; k < q; k++) {
      const v = u[p * q + k];
      if (v === 0) continue;
      for (let j = 0; j < c; j++) out[p * c + j] -= v * ux[k * c + j];
    }
  return out;
}
