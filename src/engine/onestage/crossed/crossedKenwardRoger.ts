// Kenward–Roger for the crossed model with a common residual, as pbkrtest's vcovAdj and Lb_ddf
// compute it for the same lmer fit. The variance parameters are the random terms' variances and
// the residual variance, V = sum_i sigma_i² G_i + sigma² I with G_i = Z_i Z_i' (Z_i the 0/1
// indicators of term i's levels); with V^-1 X = TT and Phi the fixed effects' covariance,
//   P_i = -X'V^-1 G_i V^-1 X,  Q_ij = X'V^-1 G_i V^-1 G_j V^-1 X,
//   IE2_ij = tr(V^-1 G_i V^-1 G_j) - 2 tr(Phi Q_ij) + tr(Phi P_i Phi P_j)  (= tr(P G_i P G_j)),
//   W = 2 IE2^-1,  UU = sum_ij W_ij (Q_ij - P_i Phi P_j),  Phi_A = Phi + 2 Phi UU Phi,
// and per contrast l the df of Kenward & Roger (1997) for one row (contrastInference.ts).
// V^-1 is read as (E - U U') / sigma² (crossedInverseParts.ts): E block-diagonal by site, U the
// year part (n x q). Then Z_i'V^-1 X, G_i V^-1 X and V^-1 applied to them are block products, and
//   tr(H^-1 G_i H^-1 G_j) = |Z_i'E Z_j|²_F - 2 <G_i U, E G_j U> + tr(U'G_i U U'G_j U),
// where Z_i'E Z_j is summed site by site (a year term's levels run through many sites, so its
// rows are gathered over all sites before squaring; the other terms' levels stay in one site).
import type { CrossedData } from './crossedData.js';
import type { CrossedLayout } from './crossedLayout.js';
import { localColumns } from './crossedLayout.js';
import type { CrossedEvaluation } from './crossedLikelihood.js';
import type { CrossedTerm } from './terms.js';
import { applyEBlock, applyHInverse, inverseParts, largestBlock, MAX_BLOCK_PLOTS, type InverseParts } from './crossedInverseParts.js';
import { solveSymmetric } from './denseSmall.js';
import { kenwardRogerDf } from '../contrastInference.js';

/** One variance parameter's levels: level of each plot (-1 none), how many, and whether a level can span sites. */
interface Levels {
  readonly of: Int32Array;
  readonly count: number;
  readonly spansSites: boolean;
}

export interface CrossedKenwardRoger {
  /** Kenward–Roger df and adjusted variance l'Phi_A l of each contrast. */
  contrast(l: Float64Array): { df: number; variance: number };
}

function termLevels(d: CrossedData, L: CrossedLayout, parts: InverseParts, term: CrossedTerm | 'residual'): Levels {
  const n = parts.n;
  const of = new Int32Array(n);
  const t = L.t;
  const blockOffset = new Int32Array(d.trials.length + 1);
  d.trials.forEach((tr, i) => (blockOffset[i + 1] = blockOffset[i] + tr.nBlocks));
  for (let p = 0; p < n; p++) {
    const i = parts.trialOf[p];
    const c = parts.plotInTrial[p];
    const tr = d.trials[i];
    const j = tr.treatment[c];
    switch (term) {
      case 'site': of[p] = tr.site; break;
      case 'year': of[p] = tr.year; break;
      case 'trial': of[p] = i; break;
      case 'block': of[p] = tr.block[c] >= 0 ? blockOffset[i] + tr.block[c] : -1; break;
      case 'treatment-by-site': of[p] = tr.site * t + j; break;
      case 'treatment-by-year': of[p] = tr.year * t + j; break;
      case 'treatment-by-trial': of[p] = i * t + j; break;
      case 'residual': of[p] = p; break;
    }
  }
  const count = { site: L.nSites, year: L.nYears, trial: d.trials.length, block: blockOffset[d.trials.length], 'treatment-by-site': L.nSites * t, 'treatment-by-year': L.nYears * t, 'treatment-by-trial': d.trials.length * t, residual: n }[term];
  return { of, count, spansSites: term === 'year' || term === 'treatment-by-year' };
}

/** Z'x (levels x c) for x n x c. */
function sumByLevel(lv: Levels, x: Float64Array, c: number): Float64Array {
  const out = new Float64Array(lv.count * c);
  for (let p = 0; p < lv.of.length; p++) {
    const a = lv.of[p];
    if (a < 0) continue;
    for (let k = 0; k < c; k++) out[a * c + k] += x[p * c + k];
  }
  return out;
}

/** Z y (n x c) for y levels x c. */
function spread(lv: Levels, y: Float64Array, c: number): Float64Array {
  const out = new Float64Array(lv.of.length * c);
  for (let p = 0; p < lv.of.length; p++) {
    const a = lv.of[p];
    if (a < 0) continue;
    for (let k = 0; k < c; k++) out[p * c + k] = y[a * c + k];
  }
  return out;
}

/** a' b for a (rows x ca), b (rows x cb), row-major: ca x cb. */
function crossProduct(a: Float64Array, ca: number, b: Float64Array, cb: number, rows: number): Float64Array {
  const out = new Float64Array(ca * cb);
  for (let r = 0; r < rows; r++)
    for (let i = 0; i < ca; i++) {
      const v = a[r * ca + i];
      if (v === 0) continue;
      for (let j = 0; j < cb; j++) out[i * cb + j] += v * b[r * cb + j];
    }
  return out;
}

/** a'a for a (rows x c), lower triangle accumulated then mirrored. */
function gram(a: Float64Array, c: number, rows: number): Float64Array {
  const out = new Float64Array(c * c);
  for (let r = 0; r < rows; r++) {
    const base = r * c;
    for (let i = 0; i < c; i++) {
      const v = a[base + i];
      if (v === 0) continue;
      const row = i * c;
      for (let j = 0; j <= i; j++) out[row + j] += v * a[base + j];
    }
  }
  for (let i = 0; i < c; i++) for (let j = 0; j < i; j++) out[j * c + i] = out[i * c + j];
  return out;
}

function multiply(a: Float64Array, b: Float64Array, p: number): Float64Array {
  const out = new Float64Array(p * p);
  for (let i = 0; i < p; i++)
    for (let k = 0; k < p; k++) {
      const v = a[i * p + k];
      if (v === 0) continue;
      for (let j = 0; j < p; j++) out[i * p + j] += v * b[k * p + j];
    }
  return out;
}

function traceProduct(a: Float64Array, b: Float64Array, p: number): number {
  let s = 0;
  for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) s += a[i * p + j] * b[j * p + i];
  return s;
}

/**
 * Block by block, for every pair (nPar x nPar): |Z_i'E Z_j|²_F, and <G_i U, E G_j U> from the level
 * sums zu_i = Z_i'U (levels x q): E_g G_j U = (Z_j'E_g)' zu_j on the block's plots.
 */
function blockTraces(parts: InverseParts, levels: readonly Levels[], zu: readonly Float64Array[]): { frobenius: Float64Array; cross: Float64Array } {
  const nPar = levels.length;
  const q = parts.q;
  const out = new Float64Array(nPar * nPar);
  const cross = new Float64Array(nPar * nPar);
  const residual = nPar - 1; // the residual is the last parameter
  const yFull = new Float64Array(q > 0 ? parts.n * q : 0);
  // pairs with a level spanning sites: Z_i'E Z_j gathered over the sites first (one side is small)
  const gathered = new Map<number, Float64Array>();
  for (let i = 0; i < nPar; i++)
    for (let j = i; j < nPar; j++) if (levels[i].spansSites || levels[j].spansSites) gathered.set(i * nPar + j, new Float64Array(levels[i].count * levels[j].count));
  const { start, e } = parts;
  for (let g = 0; g < e.length; g++) {
    const s0 = start[g];
    const ng = start[g + 1] - s0;
    const blk = e[g];
    // this block's levels of each parameter, numbered locally
    const local = levels.map((lv) => {
      const index = new Map<number, number>();
      const at = new Int32Array(ng);
      for (let a = 0; a < ng; a++) {
        const level = lv.of[s0 + a];
        if (level < 0) {
          at[a] = -1;
          continue;
        }
        if (!index.has(level)) index.set(level, index.size);
        at[a] = index.get(level)!;
      }
      return { at, global: [...index.keys()] };
    });
    const rows: Float64Array[] = new Array(nPar);
    for (let i = 0; i < nPar; i++) {
      const li = local[i];
      const ni = li.global.length;
      // R = Z_i'E_g (ni x ng)
      const r = new Float64Array(ni * ng);
      for (let a = 0; a < ng; a++) {
        const la = li.at[a];
        if (la < 0) continue;
        const row = la * ng;
        const src = a * ng;
        for (let b = 0; b < ng; b++) r[row + b] += blk[src + b];
      }
      rows[i] = r;
      for (let j = i; j < nPar; j++) {
        const lj = local[j];
        const nj = lj.global.length;
        const s = new Float64Array(ni * nj);
        for (let b = 0; b < ng; b++) {
          const lb = lj.at[b];
          if (lb < 0) continue;
          for (let a = 0; a < ni; a++) s[a * nj + lb] += r[a * ng + b];
        }
        const acc = gathered.get(i * nPar + j);
        if (acc) {
          const cj = levels[j].count;
          for (let a = 0; a < ni; a++) for (let b = 0; b < nj; b++) acc[li.global[a] * cj + lj.global[b]] += s[a * nj + b];
        } else {
          let sq = 0;
          for (let x = 0; x < ni * nj; x++) sq += s[x] * s[x];
          out[i * nPar + j] += sq;
        }
      }
    }
    if (q === 0) continue;
    const y = new Float64Array(ng * q);
    for (let j = 0; j < nPar; j++) {
      // Y = E_g Z_j zu_j = R_j' zu_j (ng x q); for the residual (Z = I) E_g U_g through D - F F'
      y.fill(0);
      const r = rows[j];
      const gj = local[j].global;
      const zj = zu[j];
      if (j === residual) {
        applyEBlock(parts, g, parts.u, yFull, q);
        y.set(yFull.subarray(s0 * q, (s0 + ng) * q));
      } else {
        for (let lb = 0; lb < gj.length; lb++) {
          const z = gj[lb] * q;
          for (let a = 0; a < ng; a++) {
            const v = r[lb * ng + a];
            if (v === 0) continue;
            const ya = a * q;
            for (let k = 0; k < q; k++) y[ya + k] += v * zj[z + k];
          }
        }
      }
      for (let i = 0; i <= j; i++) {
        const at = levels[i].of;
        const zi = zu[i];
        let sum = 0;
        for (let a = 0; a < ng; a++) {
          const level = at[s0 + a];
          if (level < 0) continue;
          const z = level * q;
          const ya = a * q;
          for (let k = 0; k < q; k++) sum += zi[z + k] * y[ya + k];
        }
        cross[i * nPar + j] += sum;
      }
    }
  }
  for (const [key, acc] of gathered) {
    let sq = 0;
    for (let x = 0; x < acc.length; x++) sq += acc[x] * acc[x];
    out[key] += sq;
  }
  for (let i = 0; i < nPar; i++)
    for (let j = 0; j < i; j++) {
      out[i * nPar + j] = out[j * nPar + i];
      cross[j * nPar + i] = cross[i * nPar + j] = cross[i * nPar + j] + cross[j * nPar + i];
    }
  return { frobenius: out, cross };
}

/** The fixed effects' design X (n x p) in group order, as the border's fixed columns read it. */
function fixedDesign(d: CrossedData, L: CrossedLayout, parts: InverseParts, theta: ArrayLike<number>): Float64Array {
  const p = L.p;
  const x = new Float64Array(parts.n * p);
  const colsByYear = Array.from({ length: L.nYears }, (_, y) => localColumns(L, y, theta).filter((c) => !c.inSite && c.index >= L.q));
  for (let plot = 0; plot < parts.n; plot++) {
    const tr = d.trials[parts.trialOf[plot]];
    const j = tr.treatment[parts.plotInTrial[plot]];
    for (const c of colsByYear[tr.year]) if (c.row === 0 || c.row === 1 + j) x[plot * p + c.index - L.q] += c.value;
  }
  return x;
}

export function crossedKenwardRoger(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation): CrossedKenwardRoger {
  const p = L.p;
  const s2 = ev.sigma2;
  const parts = inverseParts(d, L, ev);
  const n = parts.n;
  const q = parts.q;
  const names: (CrossedTerm | 'residual')[] = [...L.terms, 'residual'];
  const levels = names.map((name) => termLevels(d, L, parts, name));
  const nPar = names.length;
  const phi = Float64Array.from(ev.xhxInverse, (v) => v * s2);

  const X = fixedDesign(d, L, parts, ev.theta);
  const tt = applyHInverse(parts, X, p).map((v) => v / s2);
  const P: Float64Array[] = [];
  const OO: Float64Array[] = [];
  const VOO: Float64Array[] = [];
  for (const lv of levels) {
    const oo = spread(lv, sumByLevel(lv, tt, p), p); // G_i V^-1 X
    OO.push(oo);
    P.push(crossProduct(oo, p, tt, p, n).map((v) => -v));
    VOO.push(applyHInverse(parts, oo, p).map((v) => v / s2));
  }
  const Q = (i: number, j: number) => crossProduct(OO[i], p, VOO[j], p, n);

  // tr(V^-1 G_i V^-1 G_j) = tr(H^-1 G_i H^-1 G_j) / sigma⁴ through E and U
  const zu = levels.map((lv) => (q > 0 ? sumByLevel(lv, parts.u, q) : new Float64Array(0))); // Z_i'U
  const { frobenius: ktrace, cross } = blockTraces(parts, levels, zu);
  if (q > 0) {
    const ugu = zu.map((z, i) => gram(z, q, levels[i].count)); // U'G_i U
    for (let i = 0; i < nPar; i++)
      for (let j = 0; j < nPar; j++) ktrace[i * nPar + j] += -2 * cross[i * nPar + j] + traceProduct(ugu[i], ugu[j], q);
  }
  const ie2 = new Float64Array(nPar * nPar);
  const qs = new Map<number, Float64Array>();
  const phiP = P.map((pi) => multiply(phi, pi, p));
  for (let i = 0; i < nPar; i++) {
    for (let j = i; j < nPar; j++) {
      const qij = Q(i, j);
      qs.set(i * nPar + j, qij);
      let phiQ = 0;
      for (let x = 0; x < p * p; x++) phiQ += phi[x] * qij[x];
      const v = ktrace[i * nPar + j] / (s2 * s2) - 2 * phiQ + traceProduct(phiP[i], phiP[j], p);
      ie2[i * nPar + j] = v;
      ie2[j * nPar + i] = v;
    }
  }
  // W = 2 IE2^-1. pbkrtest takes MASS::ginv instead when IE2's smallest |eigenvalue| is below 1e-10
  // (an absolute bound, so it depends on the units); the two differ only when IE2 is also
  // ill-conditioned beyond 1/sqrt(machine epsilon). A singular IE2 is refused here.
  const W = new Float64Array(nPar * nPar);
  for (let c = 0; c < nPar; c++) {
    const e = new Float64Array(nPar);
    e[c] = 1;
    const x = solveSymmetric(ie2, e, nPar);
    if (!x) throw new Error('the expected information of the variance parameters is singular (a variance at or near zero)');
    for (let r = 0; r < nPar; r++) W[r * nPar + c] = 2 * x[r];
  }
  // pbkrtest's UU (named apart from U, the year part of H^-1)
  const adjustment = new Float64Array(p * p);
  const addTerm = (i: number, j: number, sym: boolean) => {
    const qij = qs.get(i * nPar + j)!;
    const ppp = multiply(multiply(P[i], phi, p), P[j], p);
    const w = W[i * nPar + j];
    for (let a = 0; a < p; a++)
      for (let b = 0; b < p; b++) {
        const v = w * (qij[a * p + b] - ppp[a * p + b]);
        adjustment[a * p + b] += v;
        if (sym) adjustment[b * p + a] += v;
      }
  };
  for (let i = 0; i < nPar; i++) for (let j = i + 1; j < nPar; j++) addTerm(i, j, true);
  for (let i = 0; i < nPar; i++) addTerm(i, i, false);
  const phiA = Float64Array.from(phi);
  const ga = multiply(multiply(phi, adjustment, p), phi, p);
  for (let x = 0; x < p * p; x++) phiA[x] += 2 * ga[x];

  return {
    contrast(l) {
      const phiL = new Float64Array(p);
      for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) phiL[a] += phi[a * p + b] * l[b];
      let v0 = 0;
      let variance = 0;
      for (let a = 0; a < p; a++) {
        v0 += l[a] * phiL[a];
        for (let b = 0; b < p; b++) variance += l[a] * phiA[a * p + b] * l[b];
      }
      // a_i = tr(Theta Phi P_i Phi) with Theta = l l' / v0; for one row pbkrtest's A1 = A2 = a'W a
      const a = P.map((pi) => {
        let s = 0;
        for (let x = 0; x < p; x++) for (let y = 0; y < p; y++) s += phiL[x] * pi[x * p + y] * phiL[y];
        return s / v0;
      });
      let a1 = 0;
      for (let i = 0; i < nPar; i++) for (let j = 0; j < nPar; j++) a1 += a[i] * W[i * nPar + j] * a[j];
      return { df: kenwardRogerDf(a1, a1, 1), variance };
    },
  };
}

/**
 * Kenward–Roger when it can be given, else null with a warning saying why (the caller gives
 * Satterthwaite df instead): a residual per trial is not covered, nor a site (or, without site
 * terms, a trial) with more plots than MAX_BLOCK_PLOTS, whose block of E would be held dense.
 */
export function kenwardRogerOrWarn(d: CrossedData, L: CrossedLayout, ev: CrossedEvaluation, residualPerTrial: boolean, warnings: string[], limit = MAX_BLOCK_PLOTS): CrossedKenwardRoger | null {
  const instead = 'Satterthwaite df are given instead';
  if (residualPerTrial) {
    warnings.push(`Kenward–Roger df are not available for the model with site or year terms and a residual per trial: ${instead}`);
    return null;
  }
  const largest = largestBlock(d, L);
  if (largest > limit) {
    warnings.push(`Kenward–Roger df need a dense block of ${largest} x ${largest} for the largest ${L.bs > 0 ? 'site' : 'trial'} (limit ${limit} plots): ${instead}`);
    return null;
  }
  try {
    return crossedKenwardRoger(d, L, ev);
  } catch (err) {
    warnings.push(`Kenward–Roger df could not be computed (${(err as Error).message}): ${instead}`);
    return null;
  }
}
