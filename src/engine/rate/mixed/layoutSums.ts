// Sufficient statistics of the mixed quadratic's responses, per trial layout. Trials of one
// layout share the factor Lm of M and B = Lm⁻¹ Λ' at any theta; only Z'y, X'y and y'y differ.
// What the REML criterion takes from the responses is linear or quadratic in them:
//   Σ_t cX' cy_t       = cX' B Σ_t z_t                       (z_t = Z_t'y_t)
//   Σ_t ‖cy_t‖²        = tr(B C B') + m ‖B z̄‖²              (C = Σ_t (z_t - z̄)(z_t - z̄)')
// so one evaluation costs O(q³) per layout instead of O(q²) per trial. The responses are
// centred on their layout mean before the scatter is summed (two passes), so the large
// common part is one accurate product instead of thousands of cancelling ones.
import type { MixedNetworkData, MixedTrialData } from './mixedData.js';

export interface LayoutResponseSums {
  /** Trials in the layout. */
  readonly count: number;
  /** Mean of Z'y over the layout's trials (q). */
  readonly zMean: Float64Array;
  /** Σ (Z'y - mean)(Z'y - mean)' (q x q, row-major). */
  readonly zScatter: Float64Array;
  /** Σ X'y (3) and Σ y'y. */
  readonly xty: Float64Array;
  readonly yty: number;
}

/** The sums of each layout, `layoutOf[i]` giving trial i's layout among `layouts` of them. */
export function layoutResponseSums(d: MixedNetworkData, layoutOf: Int32Array, layouts: number): LayoutResponseSums[] {
  const members: MixedTrialData[][] = Array.from({ length: layouts }, () => []);
  d.trials.forEach((t, i) => members[layoutOf[i]].push(t));
  return members.map((ts) => {
    const q = ts[0].q;
    // Compensated sums: computed once, they carry the large common part of every evaluation.
    const zMean = Float64Array.from({ length: q }, (_, i) => compensatedSum(ts, (t) => t.zty[i]) / ts.length);
    const xty = Float64Array.from({ length: 3 }, (_, a) => compensatedSum(ts, (t) => t.xty[a]));
    const yty = compensatedSum(ts, (t) => t.yty);
    const zScatter = new Float64Array(q * q);
    const dev = new Float64Array(q);
    for (const t of ts) {
      for (let i = 0; i < q; i++) dev[i] = t.zty[i] - zMean[i];
      for (let i = 0; i < q; i++) for (let j = 0; j < q; j++) zScatter[i * q + j] += dev[i] * dev[j];
    }
    return { count: ts.length, zMean, zScatter, xty, yty };
  });
}

/** Kahan–Babuška (Neumaier) summation. */
function compensatedSum<T>(items: readonly T[], value: (item: T) => number): number {
  let sum = 0;
  let carry = 0;
  for (const item of items) {
    const v = value(item);
    const t = sum + v;
    carry += Math.abs(sum) >= Math.abs(v) ? sum - t + v : v - t + sum;
    sum = t;
  }
  return sum + carry;
}
