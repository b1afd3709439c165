// Results per contrast: the plain sentence, the numbers (pooled estimate and interval,
// prediction interval, chances, tau², I², Q), the forest plot, moderators and sensitivity.
// With many trials the forest plot shows the heaviest-weighted ones and a sentence describes the
// spread of all of them; the appendix lists them all.
import type { CompactAnalysisReport } from '../../../api/analysis/report.js';
import type { ForestRow } from '../../charts/chartData.js';
import { decimalsFromSe, esc, finite, num, sigDecimals, table, type Section } from '../markup.js';
import { trialSummaries, type ReportCharts } from '../reportInput.js';
import { contrastSentence } from './summarySentences.js';
import { trialSpreadSentence } from './trialSpread.js';

/** Trials drawn in a forest plot; beyond this the heaviest-weighted are drawn and the rest summarised. */
export const FOREST_MAX_ROWS = 45;

export function forestRows(a: CompactAnalysisReport, i: number): { rows: ForestRow[]; total: number } {
  const p = a.twoStage.pooled[i];
  const share = new Map<string, number>();
  p.weights.trial.forEach((t, j) => share.set(t, p.weights.share[j]));
  const rows: ForestRow[] = [];
  for (const { entry } of trialSummaries(a)) {
    const c = entry.contrasts.find((x) => x.name === p.name);
    if (!c || !c.estimable || !finite(c.estimate) || !finite(c.lower) || !finite(c.upper)) continue;
    rows.push({ trial: entry.trial, site: entry.site ?? '', year: entry.year ?? '', estimate: c.estimate, lower: c.lower, upper: c.upper, weightShare: share.get(entry.trial) ?? 0 });
  }
  const total = rows.length;
  const kept = total > FOREST_MAX_ROWS ? [...rows].sort((x, y) => y.weightShare - x.weightShare).slice(0, FOREST_MAX_ROWS) : rows;
  kept.sort((x, y) => String(x.year).localeCompare(String(y.year)) || x.site.localeCompare(y.site));
  return { rows: kept, total };
}

function moderatorsHtml(a: CompactAnalysisReport, i: number): string {
  const mr = a.twoStage.pooled[i].metaRegression;
  if (!mr) return '';
  const key = `twoStage.pooled.${i}.metaRegression`;
  const rows = mr.coefficients.map((c, j) => [esc(c.term), num(`${key}.coefficients.${j}.estimate`, c.estimate, decimalsFromSe(c.se) + 1), num(`${key}.coefficients.${j}.se`, c.se, decimalsFromSe(c.se) + 1), num(`${key}.coefficients.${j}.p`, c.p, 3, { p: true })]);
  const test = mr.moderatorTest;
  return `<h4>Moderators</h4>${table(['Term', 'Coefficient', 'SE', 'p'], rows, 'narrow')}<p>Joint test of the moderators: p ${num(`${key}.moderatorTest.p`, test?.p, 3, { p: true })}; tau² left unexplained ${num(`${key}.residualTau2`, mr.residualTau2, sigDecimals(mr.residualTau2))}, share of tau² explained ${num(`${key}.tau2Explained`, mr.tau2Explained, 0, { percent: true })}. A moderator that explains little is no reason to give different advice by site.</p>`;
}

function sensitivityHtml(a: CompactAnalysisReport, i: number, d: number): string {
  const loo = a.twoStage.pooled[i].sensitivity.leaveOneOut;
  if (!loo || loo.estimate.length === 0) return '';
  const est = loo.estimate.map((e) => (finite(e) ? e : Number.NaN));
  let lo = 0;
  let hi = 0;
  est.forEach((e, j) => {
    if (e < est[lo]) lo = j;
    if (e > est[hi]) hi = j;
  });
  const key = `twoStage.pooled.${i}.sensitivity.leaveOneOut.estimate`;
  return `<h4>Sensitivity</h4><p>Leaving out one trial at a time, the pooled estimate ranges from ${num(`${key}.${lo}`, est[lo], d)} (without ${esc(loo.trial[lo])}) to ${num(`${key}.${hi}`, est[hi], d)} (without ${esc(loo.trial[hi])}): no single trial carries the result${Math.abs(est[hi] - est[lo]) > 2 * (a.twoStage.pooled[i].se ?? Infinity) ? ' — except that the range is wider than two standard errors; look at those trials' : ''}.</p>`;
}

export function contrastResults(a: CompactAnalysisReport, i: number, charts: ReportCharts): string {
  const p = a.twoStage.pooled[i];
  const k = `twoStage.pooled.${i}`;
  const unit = a.contrastUnits[p.name] ?? null;
  const d = decimalsFromSe(p.se);
  const rows: string[][] = [
    ['Pooled estimate (interval)', `${num(`${k}.estimate`, p.estimate, d)} (${num(`${k}.lower`, p.lower, d)} to ${num(`${k}.upper`, p.upper, d)})`],
    ['Standard error; p', `${num(`${k}.se`, p.se, d + 1)}; ${num(`${k}.p`, p.p, 3, { p: true })}`],
    ['Prediction interval for a new site', `${num(`${k}.predictionLower`, p.predictionLower, d)} to ${num(`${k}.predictionUpper`, p.predictionUpper, d)}`],
    ['Chance of a positive effect at a new site', num(`${k}.probPositive`, p.probPositive, 0, { percent: true })],
    [`Chance of more than the break-even (${a.settings.threshold})`, num(`${k}.probAboveThreshold`, p.probAboveThreshold, 0, { percent: true })],
    ['tau² (interval)', `${num(`${k}.tau2`, p.tau2, 4)} (${num(`${k}.tau2Lower`, p.tau2Lower, 4)} to ${num(`${k}.tau2Upper`, p.tau2Upper, 4)})`],
    ['I²; Q (df, p)', `${num(`${k}.I2`, p.I2, 1, { percent: true })}; ${num(`${k}.Q`, p.Q, 2)} (${num(`${k}.Qdf`, p.Qdf, 0)}, ${num(`${k}.Qp`, p.Qp, 3, { p: true })})`],
    ['Trials pooled', num(`${k}.k`, p.k, 0)],
  ];
  const { rows: fr, total } = forestRows(a, i);
  const forest = charts.forest({
    rows: fr,
    pooled: finite(p.estimate) && finite(p.lower) && finite(p.upper) ? { estimate: p.estimate, lower: p.lower, upper: p.upper } : null,
    prediction: finite(p.predictionLower) && finite(p.predictionUpper) ? { lower: p.predictionLower, upper: p.predictionUpper } : null,
    threshold: a.settings.threshold,
    unit,
    width: 680,
    decimals: d,
  });
  const shown = fr.length < total ? ` Showing the ${fr.length} trials with the largest weight of ${total}; Appendix A lists every trial.` : '';
  const leftOut = p.leftOut.length ? `<p class="note">Left out of this pool: ${p.leftOut.map(esc).join('; ')}.</p>` : '';
  return `<div class="contrast" id="contrast-${esc(p.name)}"><h3>${esc(p.name)}${unit ? ` (${esc(unit)})` : ''}</h3>${contrastSentence(a, i)}${table(['Quantity', 'Value'], rows, 'narrow keyvals')}<figure class="chart">${forest}<figcaption>Forest plot for ${esc(p.name)}: each trial's estimate with its ${Math.round(a.settings.confidence * 100)}% interval (square area proportional to its weight), the pooled mean (diamond) and the prediction for a new site (dashed bar).${shown}</figcaption></figure>${trialSpreadSentence(a, i, d)}${leftOut}${moderatorsHtml(a, i)}${sensitivityHtml(a, i, d)}</div>`;
}

export function resultsSection(a: CompactAnalysisReport, charts: ReportCharts): Section {
  return { id: 'results', title: 'Results by contrast', html: a.twoStage.pooled.map((_, i) => contrastResults(a, i, charts)).join('\n'), newPage: true };
}
