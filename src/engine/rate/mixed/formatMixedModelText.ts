// A short plain-text block for the mixed-model quadratic: the population curve, the spread
// of trials around it, the population optimum with its interval, and the trial optima.
import type { Num } from '../types.js';
import type { MixedRateResult } from './types.js';

function g(x: Num): string {
  return x === null ? '–' : Math.abs(x) >= 1e4 || (Math.abs(x) < 1e-3 && x !== 0) ? x.toExponential(3) : x.toPrecision(4);
}

function f(x: Num, digits = 1): string {
  return x === null ? '–' : x.toFixed(digits);
}

export function formatMixedModelText(m: MixedRateResult | null | undefined, rateUnit: string): string[] {
  if (m === undefined) return [];
  if (m === null) return ['Mixed-model quadratic: not fitted (see warnings).'];
  const o = m.optimum;
  const s = m.fixed;
  const se = m.standardErrors;
  const sd = m.randomSd;
  const c = m.randomCorrelations;
  const groups = Object.entries(m.groupingVariances).map(([k, v]) => `${k === 'col' ? 'column' : k} variance ${g(v)}`);
  const t = m.trialOptima;
  return [
    `Mixed-model quadratic (random trial deviations of intercept, slope, curvature; REML; ${m.trials} trials, ${m.plots} plots)` + (m.convergence.converged ? '' : ' — DID NOT CONVERGE'),
    `  population curve: intercept ${g(s.intercept)} (${g(se.intercept)}), linear ${g(s.linear)} (${g(se.linear)}), quadratic ${g(s.quadratic)} (${g(se.quadratic)})`,
    `  between-trial sd: intercept ${g(sd.intercept)}, linear ${g(sd.linear)}, quadratic ${g(sd.quadratic)}; correlations ${f(c.interceptLinear, 2)}, ${f(c.interceptQuadratic, 2)}, ${f(c.linearQuadratic, 2)} (int-lin, int-quad, lin-quad)`,
    `  ${[...groups, `residual variance ${g(m.residualVariance)}`].join(', ')}; restricted (REML) log-likelihood ${f(m.logLik, 3)}`,
    `  population optimum: ${f(o.optimum)} ${rateUnit}` + (o.lower !== null ? `   interval ${f(o.lower)} to ${f(o.upper)} (delta method)` : '') + (o.flags.length > 0 ? `   note: ${o.flags.join(', ')}` : ''),
    `  trial optima from the predicted deviations: ` + t.quantiles.map((q) => `${Math.round(q.p * 100)}% ${f(q.value)}`).join(', ') + `; no input pays at ${t.shareNoInputPays === null ? '–' : Math.round(t.shareNoInputPays * 100)}% of trials`,
    ...(m.convergence.note ? [`  note: ${m.convergence.note}`] : []),
  ];
}
