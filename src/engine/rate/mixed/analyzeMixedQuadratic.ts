// The mixed-model quadratic rate response over a network: REML fit, the population-average
// economic optimum with its delta-method interval, and the trial-specific optima implied by
// the predicted trial deviations. Plots are those the per-trial curves use.
import type { NetworkInput } from '../../types.js';
import { cappedOptimum, type Curve } from '../curves.js';
import { num } from '../../jsonSafe.js';
import { quantileType7 } from '../quantile.js';
import type { Num, OptimumFlag } from '../types.js';
import { fitMixedQuadratic, type MixedFitOptions } from './fitMixedQuadratic.js';
import { mixedQuadraticData } from './mixedData.js';
import { populationOptimum } from './populationOptimum.js';
import type { MixedRateResult, MixedTrialOptimum } from './types.js';

export const MIXED_SITE_QUANTILES: readonly number[] = [0.1, 0.25, 0.5, 0.75, 0.9];

export interface MixedRateOptions extends MixedFitOptions {
  readonly priceRatio: number;
  readonly confidence: number;
  /** The rate factor: trials take their own applied amounts of it (see mixedQuadraticData). */
  readonly factor?: string;
}

export function analyzeMixedQuadratic(network: NetworkInput, rates: Map<string, number>, o: MixedRateOptions): MixedRateResult {
  const data = mixedQuadraticData(network, rates, o.factor);
  if (data.trials.length < 2) throw new Error(`mixed quadratic: ${data.trials.length} trial(s) with usable plots; random trial deviations need at least 2`);
  const fit = fitMixedQuadratic(data, o);
  const [b0, b1, b2] = fit.fixed;
  const V = fit.fixedCovariance;
  const G = fit.randomCovariance;
  const r = o.priceRatio;
  let lo = Math.max(...data.trials.map((t) => t.range[0]));
  let hi = Math.min(...data.trials.map((t) => t.range[1]));
  let rangeNote: string | null = null;
  if (hi < lo) {
    lo = Math.min(...data.trials.map((t) => t.range[0]));
    hi = Math.max(...data.trials.map((t) => t.range[1]));
    rangeNote = 'the trials share no common tested range; the population optimum is sought over all tested rates';
  }
  const optimum = populationOptimum({ linear: b1, quadratic: b2, varLinear: V[1][1], varQuadratic: V[2][2], covLinearQuadratic: V[1][2] }, r, lo, hi, o.confidence);
  const byTrial: MixedTrialOptimum[] = data.trials.map((t, i) => {
    const u = fit.deviations[i];
    const curve: Curve = { model: 'quadratic', params: { intercept: b0 + u[0], linear: b1 + u[1], quadratic: b2 + u[2] } };
    const c = cappedOptimum(curve, r, t.range[0], t.range[1]);
    return { trial: t.trial, intercept: num(b0 + u[0]), linear: num(b1 + u[1]), quadratic: num(b2 + u[2]), optimum: num(c.optimum), unconstrainedOptimum: num(c.unconstrained), flags: c.flags };
  });
  const optima = byTrial.map((t) => t.optimum).filter((x): x is number => x !== null);
  const sd = (k: number) => num(Math.sqrt(G[k][k]));
  const corr = (a: number, b: number) => num(G[a][b] / Math.sqrt(G[a][a] * G[b][b]));
  const notes: string[] = [];
  if (!fit.converged) notes.push(`the optimiser did not settle (deviance spread over ${fit.starts} starts ${fit.startSpread.toExponential(2)})`);
  if (fit.singular) notes.push('variance estimated at zero (on the boundary): a variance of the trial deviations or of a blocking factor, or some combination of the trial deviations, is zero; the model may be richer than the data support');
  if (rangeNote) notes.push(rangeNote);
  const matrix = (m: number[][]): Num[][] => m.map((row) => row.map((v) => num(v)));
  return {
    model: 'quadratic-random-coefficients',
    method: 'REML',
    trials: data.trials.length,
    plots: data.n,
    rateScale: data.rateScale,
    fixed: { intercept: num(b0), linear: num(b1), quadratic: num(b2) },
    standardErrors: { intercept: num(Math.sqrt(V[0][0])), linear: num(Math.sqrt(V[1][1])), quadratic: num(Math.sqrt(V[2][2])) },
    fixedCovariance: matrix(V),
    randomCovariance: matrix(G),
    randomSd: { intercept: sd(0), linear: sd(1), quadratic: sd(2) },
    randomCorrelations: { interceptLinear: corr(0, 1), interceptQuadratic: corr(0, 2), linearQuadratic: corr(1, 2) },
    groupingVariances: Object.fromEntries(data.grouping.map((g, j) => [g, num(fit.groupingVariances[j])])),
    residualVariance: num(fit.residualVariance),
    logLik: num(fit.logLik),
    convergence: {
      converged: fit.converged,
      method: `Nelder–Mead on the profiled REML deviance (rates divided by ${data.rateScale}); stops at deviance spread 1e-12 x (1 + |deviance|) and vertex distance 1e-8, restarted until a restart gains < 1e-9; ${fit.starts} starts`,
      evaluations: fit.evaluations,
      starts: fit.starts,
      startSpread: num(fit.startSpread),
      varianceAtZero: fit.singular,
      note: notes.length > 0 ? notes.join('; ') : null,
    },
    optimum,
    trialOptima: {
      n: optima.length,
      quantiles: MIXED_SITE_QUANTILES.map((p) => ({ p, value: num(quantileType7(optima, p)) })),
      min: optima.length > 0 ? Math.min(...optima) : null,
      max: optima.length > 0 ? Math.max(...optima) : null,
      shareNoInputPays: optima.length > 0 ? byTrial.filter((t) => t.flags.includes('no-input-pays' as OptimumFlag)).length / optima.length : null,
      byTrial,
    },
  };
}
