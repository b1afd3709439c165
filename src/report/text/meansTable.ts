// Treatment means of the one-stage mixed model with their intervals and the trait's unit.
import type { AnyAnalysisReport } from '../../api/analysis/report.js';
import { dfText, effectCell, levelText, seText } from './numbers.js';
import { section, textTable } from './table.js';

export function meansLines(r: AnyAnalysisReport): string[] {
  const o = r.oneStage;
  if (!o || o.means.length === 0) return [];
  const unit = r.settings.transform === 'none' ? r.unit : `${r.settings.transform} scale`;
  const covariates = o.covariates.length > 0 ? `, at the mean ${o.covariates.map((c) => c.name).join(', ')}` : '';
  const table = textTable(
    ['treatment', `mean (${levelText(r.settings.confidence)} interval)`, 'SE', 'df'],
    o.means.map((m) => [m.treatment, effectCell(m.estimate, m.lower, m.upper, unit, m.se), seText(m.se), dfText(m.df)]),
  );
  return section(`Treatment means over all trials (one-stage mixed model${covariates})`, [table]);
}
