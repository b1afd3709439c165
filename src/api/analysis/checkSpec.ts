// A spec checked against the data it is about to analyse: every name it uses — control,
// treatment codes, factors and their levels, moderators, covariates, the rate factor — must exist
// there. Each problem names the key, the value, what exists and the closest; all are reported
// together, before any model is fitted. A misspelled moderator is an error, not a warning that
// every trial was "left out for a missing value".
import type { NetworkInput } from '../../engine/types.js';
import type { AnalysisSpec } from '../../spec/analysisSpec.js';
import { didYouMean, listNames } from '../../spec/closest.js';
import { ManyfieldError } from '../result.js';

export function checkSpecAgainstData(spec: AnalysisSpec, network: NetworkInput): void {
  const problems: string[] = [];
  const codes = network.treatments.map((t) => t.code);
  const factorNames = network.factors.map((f) => f.name);
  const numericFactors = network.factors.filter((f) => f.kind === 'numeric').map((f) => f.name);
  const unknown = (key: string, value: string, what: string, known: readonly string[]): void => {
    problems.push(`${key}: ${what} "${value}" is not in the data; ${known.length ? `the data have ${listNames(known)}${didYouMean(value, known)}` : `the data have no ${what}s`}`);
  };
  const levelsOf = (factor: string): string[] => [...new Set(network.treatments.map((t) => t.levels[factor]).filter((v) => v !== null && v !== undefined).map(String))];

  if (spec.control !== undefined && !codes.includes(spec.control)) unknown('spec.control', spec.control, 'treatment code', codes);

  spec.contrasts.forEach((c, i) => {
    const key = `spec.contrasts[${i}]`;
    if ('coefficients' in c) {
      for (const code of Object.keys(c.coefficients)) if (!codes.includes(code)) unknown(`${key}.coefficients`, code, 'treatment code', codes);
    } else if ('factor' in c) {
      if (!factorNames.includes(c.factor)) unknown(`${key}.factor`, c.factor, 'factor', factorNames);
      else {
        const levels = levelsOf(c.factor);
        c.levels.forEach((l, j) => {
          if (!levels.includes(String(l))) unknown(`${key}.levels[${j}]`, String(l), `level of ${c.factor}`, levels);
        });
      }
    } else if ('trend' in c) {
      if (!numericFactors.includes(c.trend)) {
        if (factorNames.includes(c.trend)) problems.push(`${key}.trend: factor "${c.trend}" has levels that are not numbers, so it has no trend; numeric factors: ${numericFactors.length ? listNames(numericFactors) : 'none'}`);
        else unknown(`${key}.trend`, c.trend, 'numeric factor', numericFactors);
      }
    }
  });

  const covariateNames = [...new Set(network.trials.flatMap((t) => Object.keys(t.covariates ?? {})))].sort();
  spec.moderators.forEach((m, i) => {
    if (!covariateNames.includes(m)) unknown(`spec.moderators[${i}]`, m, 'trial covariate', covariateNames);
  });
  (spec.oneStage?.covariates ?? []).forEach((m, i) => {
    if (!covariateNames.includes(m)) unknown(`spec.oneStage.covariates[${i}]`, m, 'trial covariate', covariateNames);
  });

  const rate = spec.rateResponse;
  if (rate) {
    if (!numericFactors.includes(rate.factor)) unknown('spec.rateResponse.factor', rate.factor, 'numeric factor', numericFactors);
    for (const [factor, level] of Object.entries(rate.at ?? {})) {
      if (!factorNames.includes(factor)) unknown(`spec.rateResponse.at`, factor, 'factor', factorNames);
      else if (!levelsOf(factor).includes(String(level))) unknown(`spec.rateResponse.at.${factor}`, String(level), `level of ${factor}`, levelsOf(factor));
    }
  }

  if (problems.length > 0) {
    throw new ManyfieldError('invalid-argument', `the spec does not fit the data (trait "${network.trait}", ${network.trials.length} trials); nothing was analysed:\n  ${problems.join('\n  ')}`, { problems });
  }
}
