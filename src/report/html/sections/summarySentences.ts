// The plain-language summary: sentences generated from the numbers, each claim no stronger than
// its interval. A direction ("raised", "lowered") is stated only when the confidence interval
// excludes zero; a prediction interval that spans zero is said to allow a loss at a new site.
import type { CompactAnalysisReport } from '../../../api/analysis/report.js';
import { decimalsFromSe, esc, finite, num } from '../markup.js';
import { levelText } from '../../text/numbers.js';

export function contrastSentence(a: CompactAnalysisReport, i: number): string {
  const p = a.twoStage.pooled[i];
  const key = `twoStage.pooled.${i}`;
  const unit = a.contrastUnits[p.name] ?? '';
  const u = unit ? ` ${esc(unit)}` : '';
  const level = levelText(a.settings.confidence);
  const d = decimalsFromSe(p.se);
  if (!finite(p.estimate)) return `<p>${esc(p.name)}: no pooled estimate could be computed.</p>`;
  const lower = p.lower ?? Number.NaN;
  const upper = p.upper ?? Number.NaN;
  const ci = `(${level} CI ${num(`${key}.lower`, p.lower, d)} to ${num(`${key}.upper`, p.upper, d)}${u})`;
  let effect: string;
  if (lower > 0) effect = `the effect was positive: ${num(`${key}.estimate`, p.estimate, d)}${u} on average ${ci}`;
  else if (upper < 0) effect = `the effect was negative: ${num(`${key}.estimate`, p.estimate, d)}${u} on average ${ci}`;
  else effect = `the data do not show a clear effect: the average was ${num(`${key}.estimate`, p.estimate, d)}${u} ${ci}, an interval that includes zero`;
  const parts = [`Across ${num(`${key}.k`, p.k, 0)} site-years, for <b>${esc(p.name)}</b> (${esc(p.meaning)}), ${effect}.`];
  if (finite(p.predictionLower) && finite(p.predictionUpper)) {
    const spans = p.predictionLower < 0 && p.predictionUpper > 0;
    parts.push(
      `At a new site the effect is expected between ${num(`${key}.predictionLower`, p.predictionLower, d)} and ${num(`${key}.predictionUpper`, p.predictionUpper, d)}${u} (${level} prediction interval)${spans ? ', so a loss at some sites cannot be ruled out' : ''}.`,
    );
    const t = a.settings.threshold;
    if (t !== 0 && finite(p.probAboveThreshold) && unit === (a.unit ?? ''))
      parts.push(`The chance that a new site gains more than the break-even ${num('settings.threshold', t, Math.max(d, 1))}${u} (a profitable response at current prices) is ${num(`${key}.probAboveThreshold`, p.probAboveThreshold, 0, { percent: true })}.`);
    else if (finite(p.probPositive)) parts.push(`The chance of a positive effect at a new site is ${num(`${key}.probPositive`, p.probPositive, 0, { percent: true })}.`);
  } else parts.push('Too few trials for a prediction at a new site.');
  return `<p class="sentence">${parts.join(' ')}</p>`;
}

export function rateSentence(a: CompactAnalysisReport): string | null {
  const rr = a.rateResponse;
  if (!rr) return null;
  const rec = rr.recommendation.recommended;
  const ru = rr.rateUnit ? ` ${esc(rr.rateUnit)}` : '';
  if (!finite(rec.rate)) return `<p class="sentence">No economic optimum rate could be estimated from these trials.</p>`;
  const k = 'rateResponse.recommendation.recommended';
  const interval =
    finite(rec.lower) && finite(rec.upper)
      ? ` with a ${levelText(a.settings.confidence)} interval of ${num(`${k}.lower`, rec.lower, 0)} to ${num(`${k}.upper`, rec.upper, 0)}${ru}${rec.upperAtTestedLimit ? ' (the upper end is the highest rate tested, so the true limit may be higher)' : ''}`
      : '';
  const nb = rr.recommendation.nearBest;
  const near =
    nb && finite(nb.lower) && finite(nb.upper) && nb.within > 0
      ? ` Rates from ${num('rateResponse.recommendation.nearBest.lower', nb.lower, 0)} to ${num('rateResponse.recommendation.nearBest.upper', nb.upper, 0)}${ru} return within ${num('rateResponse.recommendation.nearBest.within', nb.within, 2)} ${esc(rr.yieldUnit ?? '')} of the best.`
      : '';
  return `<p class="sentence">At the price ratio of ${num('rateResponse.priceRatio', rr.priceRatio, 4)}, the economic optimum ${rr.factor.toLowerCase() === 'rate' ? 'rate' : `rate of ${esc(rr.factor)}`} is ${num(`${k}.rate`, rec.rate, 0)}${ru}${interval}.${near} This summarises these trials only; label limits and local advice come first.</p>`;
}
