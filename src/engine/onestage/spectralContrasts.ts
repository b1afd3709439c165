// Per-trial BLUP inputs for the trials of spectral groups: h_T = X_i'V_i^-1 r_i on the trial's
// fixed columns, from the group's decomposition (spectralGroups.ts):
//   h_T = (u_T - K_TT beta) / s + sum_a c1_a F_Ta e_a,   e_a = g_a - F_Ta'beta,
// the same quantity trialContrasts reads from a pattern's block.
import type { Evaluation, ModelFrame } from './remlCriterion.js';
import type { SpectralState } from './spectralEvaluation.js';
import { groupLayout } from './spectralGroups.js';

/** For each trial of a spectral group (by trial index), its h_T; other trials are absent. */
export function spectralTreatmentResiduals(frame: ModelFrame, ev: Evaluation): Map<number, Float64Array> {
  const out = new Map<number, Float64Array>();
  if (!ev.spectral) return out;
  frame.spectral.forEach((group, gi) => {
    const state = (ev.spectral as readonly SpectralState[])[gi];
    const { m, K: gram, T, tg, nt } = groupLayout(frame.stats, group);
    const mz = m - 1;
    const { rank: ne, f } = state;
    const fb = new Float64Array(ne);
    for (let a = 0; a < ne; a++) for (let x = 0; x < nt; x++) fb[a] += f[T[x] * ne + a] * ev.beta[tg[x]];
    const kbT = new Float64Array(nt);
    for (let x = 0; x < nt; x++) for (let y = 0; y < nt; y++) kbT[x] += gram[T[x] * m + T[y]] * ev.beta[tg[y]];
    group.trials.forEach((i, e) => {
      const K = frame.stats.trials[i].gram;
      const s = ev.theta[group.residualParameter[e]];
      const h = new Float64Array(nt);
      for (let x = 0; x < nt; x++) {
        let v = (K[T[x] * m + mz] - kbT[x]) / s;
        for (let a = 0; a < ne; a++) v += (-1 / (s * (s + state.lambda[a]))) * f[T[x] * ne + a] * (state.g[e * ne + a] - fb[a]);
        h[x] = v;
      }
      out.set(i, h);
    });
  });
  return out;
}
