// Parts of the inverse of the crossed model's coefficient matrix C (shared effects and fixed
// effects, the response row left out), from its arrowhead factor L = [L_D 0; W' L_B]:
// the border block C^-1_BB = S^-1 (S = L_B L_B'), each site's coupling C^-1_sB = -L_s^-T W_s S^-1
// and its own block C^-1_ss = L_s^-T (I + W_s S^-1 W_s') L_s^-1 — a selected inversion
// (Takahashi's recurrences on the block structure): the blocks between two different sites are
// never formed. Also the forward solve x = L^-1 g, whose squared length is g'C^-1 g.
import type { CrossedLayout } from './crossedLayout.js';
import type { CrossedFactor } from './crossedLikelihood.js';
import { backSolveTranspose, forwardSolve } from './denseSmall.js';

export interface SelectedInverse {
  /** nb x nb, nb = border - 1 (years and fixed effects). */
  readonly border: Float64Array;
  /** Per site bs x bs. */
  readonly site: readonly Float64Array[];
  /** Per site bs x nb, filled on the border columns the site's trials touch. */
  readonly coupling: readonly Float64Array[];
}

export function selectedInverse(L: CrossedLayout, f: CrossedFactor): SelectedInverse {
  const B = L.border;
  const nb = B - 1;
  const bs = L.bs;
  const border = new Float64Array(nb * nb);
  const e = new Float64Array(nb);
  for (let c = 0; c < nb; c++) {
    e.fill(0);
    e[c] = 1;
    forwardSolve(f.borderFactor, B, nb, e);
    backSolveTranspose(f.borderFactor, B, nb, e);
    for (let i = 0; i < nb; i++) border[i * nb + c] = e[i];
  }
  const site: Float64Array[] = [];
  const coupling: Float64Array[] = [];
  const col = new Float64Array(bs);
  const touched = new Int32Array(nb);
  const sJ = new Float64Array(nb * nb);
  const yJ = new Float64Array(nb);
  for (let s = 0; s < L.nSites; s++) {
    const ls = f.siteFactor[s];
    const w = f.siteW[s];
    // Y = W S^-1 (bs x nb), on the border columns J this site touches (its years, the fixed
    // effects): W is zero elsewhere, and the trials of the site only ever read those columns
    let nJ = 0;
    for (let k = 0; k < nb; k++) {
      let any = false;
      for (let r = 0; r < bs; r++) if (w[r * B + k] !== 0) any = true;
      if (any) touched[nJ++] = k;
    }
    for (let a = 0; a < nJ; a++) for (let b = 0; b < nJ; b++) sJ[a * nJ + b] = border[touched[a] * nb + touched[b]];
    const y = new Float64Array(bs * nb);
    for (let r = 0; r < bs; r++) {
      yJ.fill(0, 0, nJ);
      for (let a = 0; a < nJ; a++) {
        const wk = w[r * B + touched[a]];
        if (wk === 0) continue;
        const rowK = a * nJ;
        for (let b = 0; b < nJ; b++) yJ[b] += wk * sJ[rowK + b];
      }
      for (let b = 0; b < nJ; b++) y[r * nb + touched[b]] = yJ[b];
    }
    // Z = I + Y W' (bs x bs)
    const z = new Float64Array(bs * bs);
    for (let r = 0; r < bs; r++)
      for (let c = 0; c <= r; c++) {
        let v = r === c ? 1 : 0;
        for (let k = 0; k < nb; k++) v += y[r * nb + k] * w[c * B + k];
        z[r * bs + c] = v;
        z[c * bs + r] = v;
      }
    // coupling = -L_s^-T Y, column by column (zero off J, where nothing reads it)
    const cp = new Float64Array(bs * nb);
    for (let a = 0; a < nJ; a++) {
      const j = touched[a];
      for (let r = 0; r < bs; r++) col[r] = -y[r * nb + j];
      backSolveTranspose(ls, bs, bs, col);
      for (let r = 0; r < bs; r++) cp[r * nb + j] = col[r];
    }
    // own block = L_s^-T (L_s^-T Z)' (Z symmetric)
    const m1 = new Float64Array(bs * bs);
    for (let j = 0; j < bs; j++) {
      for (let r = 0; r < bs; r++) col[r] = z[r * bs + j];
      backSolveTranspose(ls, bs, bs, col);
      for (let r = 0; r < bs; r++) m1[j * bs + r] = col[r]; // stored transposed
    }
    const own = new Float64Array(bs * bs);
    for (let j = 0; j < bs; j++) {
      for (let r = 0; r < bs; r++) col[r] = m1[r * bs + j];
      backSolveTranspose(ls, bs, bs, col);
      for (let r = 0; r < bs; r++) own[r * bs + j] = col[r];
    }
    site.push(own);
    coupling.push(cp);
  }
  return { border, site, coupling };
}

/**
 * x = L^-1 g for g given by its site parts (bs each, in place: they become x_s) and its border
 * part (nb, in place: becomes x_B). Returns |x|² = g'C^-1 g.
 */
export function arrowheadForward(L: CrossedLayout, f: CrossedFactor, siteParts: readonly (Float64Array | undefined)[], borderPart: Float64Array): number {
  const B = L.border;
  const nb = B - 1;
  const bs = L.bs;
  let sq = 0;
  siteParts.forEach((g, s) => {
    if (!g || bs === 0) return;
    sq += siteForward(L, f, s, g, borderPart);
  });
  forwardSolve(f.borderFactor, B, nb, borderPart);
  for (let k = 0; k < nb; k++) sq += borderPart[k] * borderPart[k];
  return sq;
}

/** x_s = L_s^-1 g (in place) and border -= W_s' x_s; returns |x_s|². */
export function siteForward(L: CrossedLayout, f: CrossedFactor, s: number, g: Float64Array, borderPart: Float64Array): number {
  const B = L.border;
  const nb = B - 1;
  const bs = L.bs;
  forwardSolve(f.siteFactor[s], bs, bs, g);
  const w = f.siteW[s];
  let sq = 0;
  for (let r = 0; r < bs; r++) {
    const x = g[r];
    if (x === 0) continue;
    sq += x * x;
    const row = r * B;
    for (let k = 0; k < nb; k++) borderPart[k] -= w[row + k] * x;
  }
  return sq;
}
