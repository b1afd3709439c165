// The lines a committee reads first: per contrast, what it measures and how large it is, in
// words and numbers with units — across the trials, at a new site, how much it varies
// between trials, and whether the one-stage model says the same.
import type { AnyAnalysisReport } from '../../api/analysis/report.js';
import type { ContrastReport } from '../../engine/onestage/types.js';
import { decimalsFromSe, effectCell, fixed, levelText, percent, pPhrase, probabilityText, rangeText, sig } from './numbers.js';

export function headlineLines(r: AnyAnalysisReport): string[] {
  const names = contrastNames(r);
  const level = levelText(r.settings.confidence);
  return names.flatMap((name) => {
    const unit = r.contrastUnits[name] ?? null;
    const pooled = r.twoStage.pooled.find((p) => p.name === name);
    const one = r.oneStage?.contrasts.find((c) => c.name === name);
    const lines = [`${name}${pooled?.meaning ? ` — ${pooled.meaning}` : ''}`];
    if (pooled) lines.push(...pooledSentences(pooled, unit, level, r.settings.threshold));
    if (one) lines.push(oneStageSentence(one, unit, level, r, name, pooled !== undefined));
    return lines;
  });
}

function contrastNames(r: AnyAnalysisReport): string[] {
  const names = r.twoStage.pooled.map((p) => p.name);
  for (const c of r.oneStage?.contrasts ?? []) if (!names.includes(c.name)) names.push(c.name);
  return names;
}

/** Only the pooled fields every report shape shares (the compact one keeps weights column by column). */
type PooledHeadline = AnyAnalysisReport['twoStage']['pooled'][number];

function pooledSentences(p: PooledHeadline, unit: string | null, level: string, threshold: number): string[] {
  const d = decimalsFromSe(p.se);
  const out = [`  Across ${p.k} trial${p.k === 1 ? '' : 's'}: ${effectCell(p.estimate, p.lower, p.upper, unit, p.se)} (${level} interval), ${pPhrase(p.p)}.`];
  if (p.predictionLower !== null && p.predictionUpper !== null) {
    const chances = [`above 0: ${probabilityText(p.probPositive)}`];
    if (threshold !== 0) chances.push(`above ${sig(threshold)}${unit ? ` ${unit}` : ''}: ${probabilityText(p.probAboveThreshold)}`);
    out.push(`  At a new site: ${rangeText(p.predictionLower, p.predictionUpper, unit, d)} (${level} prediction interval); chance that the true effect there is ${chances.join(', ')}.`);
  }
  if (p.k > 1)
    out.push(`  Between trials: tau² ${sig(p.tau2)}, I² ${percent(p.I2)} (Q ${sig(p.Q, 4)} on ${p.Qdf ?? '-'} df, ${pPhrase(p.Qp)}).`);
  return out;
}

function oneStageSentence(c: ContrastReport, unit: string | null, level: string, r: AnyAnalysisReport, name: string, compared: boolean): string {
  if (c.estimate === null) return `  One-stage mixed model: not estimable${c.note ? ` (${c.note})` : ''}.`;
  const agreement = r.agreement.find((a) => a.name === name);
  let tail = '';
  if (compared && agreement && agreement.agree !== null)
    tail = agreement.agree
      ? `; agrees with the two-stage result (they differ by ${fixed(Math.abs(agreement.differenceInSe ?? 0), 2)} SE)`
      : `; DIFFERS from the two-stage result by ${fixed(Math.abs(agreement.differenceInSe ?? 0), 2)} SE (see the warnings)`;
  return `  One-stage mixed model: ${effectCell(c.estimate, c.lower, c.upper, unit, c.se)} (${level} interval, ${c.df === null ? '' : `${fixed(c.df, 1)} df, `}${pPhrase(c.p)})${tail}.`;
}
