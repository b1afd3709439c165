// The variance parameters of a one-stage model, on the variance scale: one per random term and
// either one common residual variance or one per trial. V_i = sum_k theta_k V_ik, with
// V_ik = Z_k Z_k' for a random term and the identity for the residual that applies to trial i.
import type { NetworkStatistics, TermIndex } from './sufficientStatistics.js';
import { RANDOM_TERMS } from './types.js';

export type VarianceParameter =
  | { readonly name: string; readonly kind: 'term'; readonly term: TermIndex }
  | { readonly name: string; readonly kind: 'residual'; /** -1: common to all trials */ readonly trial: number };

export interface ParameterLayout {
  readonly parameters: readonly VarianceParameter[];
  /** Parameter index of each random term, or -1 when the term is not in the model. */
  readonly termParameter: readonly number[];
  /** Parameter index of each trial's residual variance. */
  readonly residualParameter: Int32Array;
}

export function parameterLayout(stats: NetworkStatistics, residual: 'common' | 'per-trial'): ParameterLayout {
  const parameters: VarianceParameter[] = [];
  const termParameter = RANDOM_TERMS.map((name, term) => {
    if (!stats.termIncluded[term]) return -1;
    parameters.push({ name, kind: 'term', term: term as TermIndex });
    return parameters.length - 1;
  });
  const residualParameter = new Int32Array(stats.trials.length);
  if (residual === 'common') {
    parameters.push({ name: 'residual', kind: 'residual', trial: -1 });
    residualParameter.fill(parameters.length - 1);
  } else {
    stats.trials.forEach((t, i) => {
      parameters.push({ name: `residual (${t.trial})`, kind: 'residual', trial: i });
      residualParameter[i] = parameters.length - 1;
    });
  }
  return { parameters, termParameter, residualParameter };
}
