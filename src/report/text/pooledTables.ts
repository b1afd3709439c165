// The two-stage pooled results as two tables: the effect with its interval, SE, df and p;
// then the spread between trials and what it means for a new site.
import type { AnyAnalysisReport } from '../../api/analysis/report.js';
import { decimalsFromSe, dfText, effectCell, levelText, percent, probabilityText, pText, rangeText, seText, sig } from './numbers.js';
import { section, textTable } from './table.js';

export function pooledLines(r: AnyAnalysisReport): string[] {
  const pooled = r.twoStage.pooled;
  if (pooled.length === 0) return [];
  const level = levelText(r.settings.confidence);
  const unit = (name: string) => r.contrastUnits[name] ?? null;
  const effects = textTable(
    ['contrast', `effect (${level} interval)`, 'SE', 'df', 'p', 'trials'],
    pooled.map((p) => [p.name, effectCell(p.estimate, p.lower, p.upper, unit(p.name), p.se), seText(p.se), dfText(p.df), pText(p.p), String(p.k)]),
  );
  const threshold = r.settings.threshold;
  const spread = textTable(
    ['contrast', 'tau²', 'I²', 'Q', 'df', 'p (Q)', `new site (${level} prediction interval)`, 'P(effect > 0)', ...(threshold !== 0 ? [`P(effect > ${sig(threshold)})`] : [])],
    pooled.map((p) => [
      p.name,
      sig(p.tau2),
      percent(p.I2),
      sig(p.Q, 4),
      p.Qdf === null ? '-' : String(p.Qdf),
      pText(p.Qp),
      rangeText(p.predictionLower, p.predictionUpper, unit(p.name), decimalsFromSe(p.se)),
      probabilityText(p.probPositive),
      ...(threshold !== 0 ? [probabilityText(p.probAboveThreshold)] : []),
    ]),
  );
  const notes = [...pooled.map(newSiteMethodLine), ...pooled.flatMap((p) => p.notes.map((n) => `  ${p.name}: ${n}`))];
  return [
    ...section(`Effects pooled across trials (two-stage, random effects; interval: ${intervalWord(r)})`, [effects]),
    ...section('Spread between trials and a new site (the chance is for the true effect at a site like those pooled)', [spread]),
    ...section('Notes on the pooling', notes),
  ];
}

/** Which method made the new-site interval, with the plug-in t interval beside a bootstrap one. */
function newSiteMethodLine(p: AnyAnalysisReport['twoStage']['pooled'][number]): string {
  const n = p.prediction;
  if (n.method === 'bootstrap-tau2')
    return `  ${p.name}: new-site interval by bootstrap over the confidence distribution of tau² (bootstrap-tau2, ${n.draws} draws, seed ${n.seed}); the plug-in t interval would be ${sig(n.plugInT.lower)} to ${sig(n.plugInT.upper)}`;
  return `  ${p.name}: new-site interval by plug-in t (plug-in-t: mean ± t(k−2)·sqrt(SE² + tau²), tau² taken as known)`;
}

function intervalWord(r: AnyAnalysisReport): string {
  const m = r.twoStage.pooled[0]?.method.interval ?? '';
  if (/Hartung–Knapp/.test(m)) return 'Hartung–Knapp–Sidik–Jonkman';
  if (/Wald/.test(m)) return 'Wald';
  return 'as the JSON method says';
}
