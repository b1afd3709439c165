// The rate section: the curves and net return (shared RateChart), the recommended optimum with
// its interval and near-best range, price sensitivity and the spread of the site optima.
import type { CompactAnalysisReport } from '../../../api/analysis/report.js';
import { curveValue, type Curve } from '../../../engine/rate/curves.js';
import type { RateResponseResult } from '../../../engine/rate/types.js';
import type { RateCurveData, RateData, RatePoint } from '../../charts/chartData.js';
import { esc, finite, num, table, type Section } from '../markup.js';
import type { ReportCharts } from '../reportInput.js';
import { rateSentence } from './summarySentences.js';

const GRID = 40;
/** Trial curves drawn; with more trials an even sample is drawn (the pooled curve uses them all). */
const MAX_TRIAL_CURVES = 200;

function trialCurve(t: RateResponseResult['trials'][number]): Curve | null {
  if (!t.model || !t.converged) return null;
  const params: Record<string, number> = {};
  for (const [k, v] of Object.entries(t.params)) if (finite(v)) params[k] = v;
  return { model: t.model, params };
}

function grid(lo: number, hi: number): number[] {
  return Array.from({ length: GRID + 1 }, (_, j) => lo + ((hi - lo) * j) / GRID);
}

export function rateChartData(rr: RateResponseResult, width: number): RateData {
  const fitted = rr.trials.map((t) => ({ t, c: trialCurve(t) })).filter((x): x is { t: typeof x.t; c: Curve } => x.c !== null);
  const step = Math.max(1, Math.ceil(fitted.length / MAX_TRIAL_CURVES));
  const trials: RateCurveData[] = fitted
    .filter((_, j) => j % step === 0)
    .map(({ t, c }) => {
      const [lo, hi] = t.testedRange;
      const rates = finite(lo) && finite(hi) ? grid(lo, hi) : [];
      return { id: t.trial, label: t.trial, points: rates.map((rate) => ({ rate, value: curveValue(c, rate) - curveValue(c, 0) })) };
    });
  const [plo, phi] = rr.pooled.range;
  let pooled: RateCurveData | null = null;
  let netReturn: RatePoint[] = [];
  if (finite(plo) && finite(phi) && fitted.length > 0) {
    const pts = grid(plo, phi).map((rate) => ({ rate, value: fitted.reduce((s, { c }) => s + curveValue(c, rate) - curveValue(c, 0), 0) / fitted.length }));
    pooled = { id: 'pooled', label: 'pooled curve', points: pts };
    netReturn = pts.map((p) => ({ rate: p.rate, value: p.value - rr.priceRatio * p.rate }));
  }
  const rec = rr.recommendation.recommended;
  const nb = rr.recommendation.nearBest;
  return {
    width,
    rateUnit: rr.rateUnit,
    yieldUnit: rr.yieldUnit,
    trials,
    pooled,
    netReturn,
    optimum: finite(rec.rate) ? { rate: rec.rate, lower: rec.lower, upper: rec.upper } : null,
    profitable: nb && finite(nb.lower) && finite(nb.upper) ? { lower: nb.lower, upper: nb.upper } : null,
  };
}

export function rateSection(a: CompactAnalysisReport, charts: ReportCharts): Section | null {
  const rr = a.rateResponse;
  if (!rr) return null;
  const ru = esc(rr.rateUnit ?? '');
  const yu = esc(rr.yieldUnit ?? '');
  const parts: string[] = [rateSentence(a) ?? ''];
  parts.push(`<figure class="chart">${charts.rate(rateChartData(rr, 680))}<figcaption>Top: yield gain over the control of each trial's fitted curve (thin) and the pooled curve (thick). Bottom: net return of the pooled curve after paying for the input, with the economic optimum (vertical line), its interval (capped bar) and the near-best rates (shaded and hatched).</figcaption></figure>`);
  const rec = rr.recommendation.recommended;
  const rk = 'rateResponse.recommendation.recommended';
  parts.push(
    table(
      ['Quantity', 'Value'],
      [
        [`Recommended rate (${ru})`, `${num(`${rk}.rate`, rec.rate, 1)} (${num(`${rk}.lower`, rec.lower, 1)} to ${num(`${rk}.upper`, rec.upper, 1)})`],
        ['Interval method', esc(rec.intervalMethod)],
        ['Why this curve', esc(rr.recommendation.reason)],
        [`Yield gain at the optimum (${yu})`, num('rateResponse.pooled.yieldGainAtOptimum', rr.pooled.yieldGainAtOptimum, 3)],
        [`Net return at the optimum (${yu})`, num('rateResponse.pooled.netReturnAtOptimum', rr.pooled.netReturnAtOptimum, 3)],
        [`Near-best rates (${ru})`, `${num('rateResponse.recommendation.nearBest.lower', rr.recommendation.nearBest?.lower, 1)} to ${num('rateResponse.recommendation.nearBest.upper', rr.recommendation.nearBest?.upper, 1)}`],
        ['Trials with a curve', num('rateResponse.pooled.trialsUsed', rr.pooled.trialsUsed, 0)],
      ],
      'narrow keyvals',
    ),
  );
  if (rr.recommendation.check) {
    const c = rr.recommendation.check;
    parts.push(`<p class="note">Check: the ${c.source === 'mixed-model-curve' ? 'mixed-model population curve' : 'pooled curve'} gives ${num('rateResponse.recommendation.check.rate', c.rate, 1)} ${ru}; ${esc(c.comparison)}.</p>`);
  }
  parts.push(
    '<h3>Price sensitivity</h3>',
    table(
      ['Price ratio', 'Multiple of the current', `Optimum (${ru})`, `Near-best rates (${ru})`, 'Trials where no input pays'],
      rr.sensitivity.map((s, j) => {
        const k = `rateResponse.sensitivity.${j}`;
        return [num(`${k}.priceRatio`, s.priceRatio, 4), num(`${k}.multiplier`, s.multiplier, 2), num(`${k}.optimum`, s.optimum, 1), `${num(`${k}.profitableLower`, s.profitableLower, 1)} to ${num(`${k}.profitableUpper`, s.profitableUpper, 1)}`, num(`${k}.shareNoInputPays`, s.shareNoInputPays, 0, { percent: true })];
      }),
      'narrow',
    ),
  );
  const so = rr.siteOptima;
  parts.push(
    '<h3>Optima of the individual site-years</h3>',
    `<p>Each trial's own optimum (held within its tested rates), over ${num('rateResponse.siteOptima.n', so.n, 0)} trials: from ${num('rateResponse.siteOptima.min', so.min, 1)} to ${num('rateResponse.siteOptima.max', so.max, 1)} ${ru}; no input paid in ${num('rateResponse.siteOptima.shareNoInputPays', so.shareNoInputPays, 0, { percent: true })} of them. Quantiles: ${so.quantiles.map((q, j) => `${Math.round(q.p * 100)}%: ${num(`rateResponse.siteOptima.quantiles.${j}.value`, q.value, 1)}`).join(', ')} ${ru}. The spread is the variation a grower should expect between fields and seasons, not an error of the recommendation.</p>`,
  );
  parts.push(`<p class="caution">${rr.cautions.map(esc).join(' ')}</p>`);
  return { id: 'rate', title: 'Rate to recommend', html: parts.join('\n'), newPage: true };
}
