// Trials that share a layout but each have their own residual variance (the per-trial residual
// model) cannot share a design pattern: M = sigma2_i I + D K_RR D differs from trial to trial.
// It differs only by a multiple of the identity, though, so one eigen-decomposition
// D K_RR D = Q Lambda Q' per layout serves all of them: with F = K_.R D Q,
//   B'V_i^-k B = K / s^k + sum_a c_k(lambda_a, s) F_a F_a',   s = sigma2_i,
//   log|V_i|   = (n - r) log s + sum_a log(s + lambda_a),
// where F_a's y entry g_a = (Z'y)_R' D q_a is the only per-trial part (spectralEvaluation.ts).
// A trial then costs O(r^2) per evaluation instead of O(r^3 + m^2 r).
// This file decides which trials are evaluated that way and describes their shared layout.
import type { NetworkStatistics } from './sufficientStatistics.js';
import type { ParameterLayout } from './parameters.js';

export interface SpectralGroup {
  /** A trial with the group's layout (its Gram matrix's design block is everyone's). */
  readonly representative: number;
  /** The group's trials (indices in NetworkStatistics.trials) and their residual parameters. */
  readonly trials: Int32Array;
  readonly residualParameter: Int32Array;
  readonly randomColumns: Int32Array;
  /** For each random term in the model with columns here: its parameter and its positions in randomColumns. */
  readonly terms: readonly { readonly parameter: number; readonly positions: Int32Array }[];
  /** Index into `terms` of each random column (by position). */
  readonly termOfPosition: Int32Array;
  /** The nonzero entries of K_RR (positions x, y and value; both triangles): an indicator Gram block is sparse. */
  readonly kNonzero: { readonly x: Int32Array; readonly y: Int32Array; readonly value: Float64Array };
}

/**
 * Groups of at least two trials with one design but different residual parameters. Trials in
 * no group (a layout of its own, or a common residual) keep the pattern route (trialBlock.ts).
 */
export function spectralGroups(stats: NetworkStatistics, layout: ParameterLayout, designOf: Int32Array, randomColumns: readonly Int32Array[]): SpectralGroup[] {
  const members = new Map<number, number[]>();
  for (let i = 0; i < stats.trials.length; i++) {
    let list = members.get(designOf[i]);
    if (!list) members.set(designOf[i], (list = []));
    list.push(i);
  }
  const groups: SpectralGroup[] = [];
  for (const list of members.values()) {
    if (list.length < 2) continue;
    const residuals = new Set(list.map((i) => layout.residualParameter[i]));
    if (residuals.size < list.length) continue; // trials sharing a residual share a pattern already
    const i0 = list[0];
    const t = stats.trials[i0];
    const R = randomColumns[i0];
    if (R.length === 0) continue;
    const terms: { parameter: number; positions: Int32Array }[] = [];
    layout.termParameter.forEach((k, term) => {
      if (k < 0) return;
      const positions: number[] = [];
      for (let b = 0; b < R.length; b++) if (t.termOfColumn[R[b]] === term) positions.push(b);
      if (positions.length > 0) terms.push({ parameter: k, positions: Int32Array.from(positions) });
    });
    const termOfPosition = new Int32Array(R.length);
    terms.forEach((term, k) => term.positions.forEach((b) => (termOfPosition[b] = k)));
    groups.push({
      representative: i0,
      trials: Int32Array.from(list),
      residualParameter: Int32Array.from(list, (i) => layout.residualParameter[i]),
      randomColumns: R,
      terms,
      termOfPosition,
      kNonzero: nonzeros(t.gram, t.m, R),
    });
  }
  return groups;
}

function nonzeros(K: Float64Array, m: number, R: Int32Array): SpectralGroup['kNonzero'] {
  const x: number[] = [];
  const y: number[] = [];
  const value: number[] = [];
  for (let a = 0; a < R.length; a++)
    for (let b = 0; b < R.length; b++) {
      const v = K[R[a] * m + R[b]];
      if (v === 0) continue;
      x.push(a);
      y.push(b);
      value.push(v);
    }
  return { x: Int32Array.from(x), y: Int32Array.from(y), value: Float64Array.from(value) };
}

/** A group's shared layout as the per-group steps read it: its Gram matrix (design part) and columns. */
export interface GroupLayout {
  readonly m: number;
  readonly K: Float64Array;
  readonly R: Int32Array;
  readonly r: number;
  readonly T: Int32Array;
  readonly tg: Int32Array;
  readonly nt: number;
}

export function groupLayout(stats: NetworkStatistics, group: SpectralGroup): GroupLayout {
  const t0 = stats.trials[group.representative];
  return { m: t0.m, K: t0.gram, R: group.randomColumns, r: group.randomColumns.length, T: t0.fixedColumns, tg: t0.fixedIndex, nt: t0.fixedColumns.length };
}
