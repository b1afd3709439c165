// A short plain-text account of a pooled result, for the CLI, logs and report captions.
// Every line names what the number is; nothing here computes anything new.
import type { PooledResult } from './types.js';

function f(x: number | null | undefined, digits = 4): string {
  return x === null || x === undefined ? 'n/a' : Number(x.toPrecision(digits)).toString();
}

function pct(x: number | null): string {
  return x === null ? 'n/a' : `${(100 * x).toFixed(1)}%`;
}

export function summarisePooled(r: PooledResult, name = 'effect'): string {
  const lines = [
    `${name}: pooled over ${r.k} trial(s)`,
    `  mean ${f(r.estimate)} (SE ${f(r.se)}), interval ${f(r.lower)} to ${f(r.upper)}, p = ${f(r.p, 3)}${r.df === null ? '' : `, t on ${r.df} df`}`,
    `  tau² ${f(r.tau2)} (interval ${f(r.tau2Lower)} to ${f(r.tau2Upper)}), tau ${f(r.tau)}${r.tau2AtBoundary ? ', at the zero boundary' : ''}`,
    `  Q ${f(r.Q)} on ${r.Qdf ?? 'n/a'} df (p = ${f(r.Qp, 3)}); I² from Q ${pct(r.I2)}, I² from tau² ${pct(r.I2FromTau2)}; H² from Q ${f(r.H2)}`,
    `  new site (${r.prediction.method}): prediction interval ${f(r.predictionLower)} to ${f(r.predictionUpper)}; P(effect > 0) ${pct(r.probPositive)}; P(effect > threshold) ${pct(r.probAboveThreshold)}`,
    ...(r.prediction.method === 'plug-in-t' ? [] : [`  new site (plug-in-t, for comparison): ${f(r.prediction.plugInT.lower)} to ${f(r.prediction.plugInT.upper)}; P(effect > 0) ${pct(r.prediction.plugInT.probPositive)}`]),
    `  prediction: ${r.prediction.description}`,
    `  tau²: ${r.method.tau2}`,
    `  interval: ${r.method.interval}`,
  ];
  if (r.metaRegression) {
    const m = r.metaRegression;
    lines.push(`  meta-regression on ${m.moderators.join(', ')} (${m.k} trials): residual tau² ${f(m.residualTau2)}, share of tau² explained ${pct(m.tau2Explained)}`);
    for (const c of m.coefficients) lines.push(`    ${c.term}: ${f(c.estimate)} (SE ${f(c.se)}), ${m.statistic} = ${f(c.statistic, 3)}, p = ${f(c.p, 3)}`);
    if (m.moderatorTest) lines.push(`    all moderators jointly: ${m.moderatorTest.distribution} = ${f(m.moderatorTest.statistic)} on ${m.moderatorTest.df}${m.moderatorTest.dfDenominator === null ? '' : ` and ${m.moderatorTest.dfDenominator}`} df, p = ${f(m.moderatorTest.p, 3)}`);
    if (m.residualHeterogeneity) lines.push(`    heterogeneity left unexplained: Q ${f(m.residualHeterogeneity.Q)} on ${m.residualHeterogeneity.df} df, p = ${f(m.residualHeterogeneity.p, 3)}`);
  }
  for (const n of r.notes) lines.push(`  note: ${n}`);
  return lines.join('\n');
}
