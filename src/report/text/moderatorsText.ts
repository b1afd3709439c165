// Meta-regression on trial covariates, per contrast: each moderator's slope with its interval,
// the joint test of the moderators, the share of tau² they explain, the heterogeneity they
// leave, and subgroup pooling for categorical moderators.
import type { AnyAnalysisReport } from '../../api/analysis/report.js';
import type { MetaRegression } from '../../engine/pooling/types.js';
import { effectCell, levelText, percent, pPhrase, pText, seText, sig } from './numbers.js';
import { section, textTable } from './table.js';

export function moderatorLines(r: AnyAnalysisReport): string[] {
  const level = levelText(r.settings.confidence);
  return r.twoStage.pooled.flatMap((p) => {
    const m = p.metaRegression;
    if (!m) return [];
    const unit = r.contrastUnits[p.name] ?? null;
    return section(`Moderators of ${p.name} (meta-regression on ${m.moderators.join(', ')}, ${m.k} trials)`, [
      m.coefficients.length === 0 ? '' : coefficientTable(m, unit, level),
      ...summaryLines(m),
      ...m.subgroups.flatMap((s) => [
        textTable(
          [`${s.moderator}`, 'trials', `effect (${level} interval)`, 'tau²'],
          s.groups.map((g) => [g.level, String(g.k), effectCell(g.estimate, g.lower, g.upper, unit, g.se), sig(g.tau2)]),
        ),
        s.betweenGroups ? `  Difference between the ${s.moderator} groups: Q ${sig(s.betweenGroups.Q, 4)} on ${s.betweenGroups.df} df, ${pPhrase(s.betweenGroups.p)}.` : `  ${s.note}`,
      ]),
      ...m.notes.map((n) => `  note: ${n}`),
    ]);
  });
}

function coefficientTable(m: MetaRegression, unit: string | null, level: string): string {
  return textTable(
    ['term', `coefficient (${level} interval)`, 'SE', m.statistic, 'p', 'reads as'],
    m.coefficients.map((c) => [c.term, effectCell(c.estimate, c.lower, c.upper, unit, c.se), seText(c.se), sig(c.statistic), pText(c.p), termMeaning(c.term)]),
  );
}

function termMeaning(term: string): string {
  if (term === 'intercept') return 'effect where every numeric moderator is 0, at the reference level of each categorical one';
  const eq = term.indexOf('=');
  if (eq > 0) return `difference at ${term.slice(0, eq)} = ${term.slice(eq + 1)} from the reference level`;
  return `change in the effect per unit of ${term}`;
}

function summaryLines(m: MetaRegression): string[] {
  const out: string[] = [];
  const t = m.moderatorTest;
  if (t)
    out.push(`  All moderators together: ${t.distribution === 'F' ? 'F' : 'chi-square'} = ${sig(t.statistic, 4)} on ${t.df}${t.dfDenominator === null ? '' : ` and ${sig(t.dfDenominator, 4)}`} df, ${pPhrase(t.p)}.`);
  if (m.residualTau2 !== null) out.push(`  Share of the between-trial variance (tau²) they explain: ${m.tau2Explained === null ? 'not defined (tau² without the moderators is 0)' : percent(m.tau2Explained)}; tau² left: ${sig(m.residualTau2)}.`);
  const h = m.residualHeterogeneity;
  if (h) out.push(`  Heterogeneity left unexplained: Q ${sig(h.Q, 4)} on ${h.df} df, ${pPhrase(h.p)}.`);
  return out;
}
