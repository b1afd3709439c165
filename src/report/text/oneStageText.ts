// The one-stage mixed model: how it fitted, its effects with df, its variance components and
// any covariate slopes. Words of the trade: restricted (REML) log-likelihood, "estimated at
// zero (on the boundary)".
import type { AnyAnalysisReport } from '../../api/analysis/report.js';
import type { OneStageResult } from '../../engine/onestage/types.js';
import { dfText, effectCell, fixed, levelText, percent, pText, rangeText, seText, sig } from './numbers.js';
import { section, textTable } from './table.js';
import { termDisplayName } from './termNames.js';

const DF_WORDS: Record<OneStageResult['options']['df'], string> = {
  satterthwaite: 'Satterthwaite df',
  'kenward-roger': 'Kenward–Roger df and SE',
  residual: 'residual df',
};

export function oneStageLines(r: AnyAnalysisReport): string[] {
  const o = r.oneStage;
  if (!o) return [];
  const level = levelText(r.settings.confidence);
  const unit = (name: string) => r.contrastUnits[name] ?? null;
  const fitLine = `Restricted (REML) log-likelihood ${fixed(o.logLik, 3)}; ${o.converged ? 'converged' : 'DID NOT CONVERGE'} in ${o.iterations} iterations; ${o.nObservations} plots in ${o.nTrials} trials.`;
  const effects =
    o.contrasts.length === 0
      ? ''
      : textTable(
          ['contrast', `effect (${level} interval)`, 'SE', 'df', 'p'],
          o.contrasts.map((c) => [c.name, c.estimate === null ? `not estimable${c.note ? `: ${c.note}` : ''}` : effectCell(c.estimate, c.lower, c.upper, unit(c.name), c.se), seText(c.se), dfText(c.df), pText(c.p)]),
        );
  const slopes =
    o.covariates.length === 0
      ? ''
      : '\n' +
        textTable(
          ['covariate slope', `per unit of the covariate (${level} interval)`, 'SE', 'df', 'p', 'means at'],
          o.covariates.map((c) => [c.name, effectCell(c.estimate, c.lower, c.upper, r.unit, c.se), seText(c.se), dfText(c.df), pText(c.p), sig(c.centre, 4)]),
        );
  const newSite =
    !o.newSite || o.newSite.length === 0
      ? ''
      : '\n' +
        textTable(
          ['contrast', `new site (${level} prediction interval)`, 'method', 'P(effect > 0)', 'plug-in t interval'],
          o.newSite.map((n) => [n.name, rangeText(n.lower, n.upper, unit(n.name), 3), n.method, percent(n.probPositive, 1), `${sig(n.plugInT.lower)} to ${sig(n.plugInT.upper)}`]),
        );
  return [
    ...section(`One-stage mixed model (REML, ${DF_WORDS[o.options.df]}, residual ${o.options.residual === 'common' ? 'common to all trials' : 'one per trial'})`, [fitLine, effects, newSite, slopes]),
    ...section('Variance components (one-stage)', [varianceTable(o, level)]),
  ];
}

function varianceTable(o: OneStageResult, level: string): string {
  const terms = o.varianceComponents.filter((v) => !v.name.startsWith('residual ('));
  const perTrial = o.varianceComponents.filter((v) => v.name.startsWith('residual ('));
  const rows = terms.map((v) => [
    termDisplayName(v.name),
    v.atZero ? '0 (estimated at zero, on the boundary)' : sig(v.estimate, 4),
    seText(v.se),
    v.lrt ? pText(v.lrt.p) : '-',
    v.profileLower === null ? '-' : `${sig(v.profileLower)} to ${sig(v.profileUpper)}`,
  ]);
  if (perTrial.length > 0) {
    const values = perTrial.map((v) => v.estimate).sort((a, b) => a - b);
    const median = values[Math.floor((values.length - 1) / 2)];
    rows.push([`residual, one per trial (${perTrial.length} trials)`, `${sig(values[0])} to ${sig(values[values.length - 1])}, median ${sig(median)}`, '-', '-', '-']);
  }
  return textTable(['term', 'variance', 'SE', 'p (likelihood ratio)', `profile ${level} interval`], rows);
}
