// Rates: per-trial and pooled response curves over the tested range, net return against rate
// with the optimum, its interval and the profitable range, a price control that asks the core
// for the optimum at the new prices (the engine's own search, no refit), the spread of the
// site optima, and the cautions always beside any rate.
import { useEffect, useState } from 'react';
import { useHost } from '../app/hostContext.js';
import type { HandlerResults } from '../host/types.js';
import type { RateResponseResult } from '../shape/resultView.js';
import { linearScale } from '../shape/linearScale.js';
import { formatNumber } from '../shape/format.js';
import { toCsv } from '../shape/csv.js';
import { ChartFrame } from '../charts/ChartFrame.js';
import { RateChart } from '../charts/shared/index.js';

type Optimum = HandlerResults['rates.optimum'];

interface Props {
  readonly rate: RateResponseResult;
  readonly within: number;
  readonly cautions: readonly string[];
  /** Prices the builder held when the analysis ran (crop price 1 when only the ratio is known). */
  readonly prices: { readonly input: number; readonly crop: number };
}

export function RatesView({ rate, within, cautions, prices }: Props) {
  const host = useHost();
  const [input, setInput] = useState(prices.input);
  const [crop, setCrop] = useState(prices.crop);
  const [opt, setOpt] = useState<Optimum | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const ratio = input / crop;
  const rateUnit = rate.rateUnit ?? 'rate unit';
  const yieldUnit = rate.yieldUnit ?? 'yield unit';
  const atAnalysed = Math.abs(ratio - rate.priceRatio) <= 1e-12 * rate.priceRatio;
  useEffect(() => {
    if (!(ratio > 0) || !Number.isFinite(ratio)) {
      setProblem('Both prices must be above zero.');
      return;
    }
    let live = true;
    const t = setTimeout(() => {
      void host.call('rates.optimum', { trials: rate.trials.map((x) => ({ trial: x.trial, model: x.model, params: x.params, testedRange: x.testedRange, converged: x.converged })), priceRatio: ratio, within, points: 81 }).then((r) => {
        if (!live) return;
        if (r.ok) {
          setOpt(r.data);
          setProblem(null);
        } else setProblem(r.error.message);
      });
    }, 60);
    return () => {
      live = false;
      clearTimeout(t);
    };
  }, [host, rate, ratio, within]);
  const rec = rate.recommendation.recommended;
  return (
    <div className="rates" data-testid="rates-view">
      <div className="rates-top">
        <section className="panel price-control" aria-label="Prices">
          <h3>Prices</h3>
          <label>
            Input price per {rateUnit}{' '}
            <input type="number" step="any" min="0" aria-label="Input price for the optimum" value={input} onChange={(e) => setInput(Number(e.target.value))} />
          </label>
          <label>
            Crop price per {yieldUnit}{' '}
            <input type="number" step="any" min="0" aria-label="Crop price for the optimum" value={crop} onChange={(e) => setCrop(Number(e.target.value))} />
          </label>
          <input type="range" aria-label="Input price slider" min={0} max={prices.input * 3 || 1} step={(prices.input * 3 || 1) / 300} value={input} onChange={(e) => setInput(Number(e.target.value))} />
          <p className="small-text">
            Price ratio <span data-testid="rates-ratio">{Number(ratio.toPrecision(4))}</span> {yieldUnit} per {rateUnit}
            {atAnalysed ? ' (as analysed).' : ` (analysed at ${Number(rate.priceRatio.toPrecision(4))}; curves not refitted).`}
          </p>
        </section>
        <section className="panel optimum-panel" data-testid="optimum" aria-label="Economic optimum rate">
          <h3>Economic optimum rate of the pooled curve</h3>
          {problem ? <p className="status-error">{problem}</p> : null}
          <p className="big-number">
            <span data-testid="optimum-value" data-value={opt?.optimum ?? ''}>
              {formatNumber(opt?.optimum ?? null, 1)}
            </span> {rateUnit}
          </p>
          <p className="small-text">
            {atAnalysed && rec.lower !== null
              ? `${Math.round(100 * 0.95)}% interval ${formatNumber(rec.lower, 1)} to ${formatNumber(rec.upper, 1)} ${rateUnit} (${rec.intervalMethod}).`
              : 'Its interval is computed at the analysed prices only; run the analysis again at these prices for it.'}{' '}
            Profitable range (net return within {formatNumber(within, 3)} {yieldUnit} of the best): {formatNumber(opt?.profitableLower ?? null, 1)} to {formatNumber(opt?.profitableUpper ?? null, 1)} {rateUnit}.
            {opt && opt.flags.length > 0 ? ` Note: ${opt.flags.join(', ')}.` : ''}
          </p>
          {atAnalysed ? (
            <div className="small-text" data-testid="recommendation">
              Recommended by the analysis: <strong>{formatNumber(rec.rate, 1)} {rateUnit}</strong> ({rec.source === 'pooled-curve' ? 'pooled curve' : 'mixed-model curve'}).{' '}
              <details className="inline-details">
                <summary>Why this one</summary>
                {sentence(rate.recommendation.reason)}
              </details>
            </div>
          ) : null}
          <p className="small-text muted">
            From the mean of {opt?.trialsUsed ?? '–'} trials' fitted curves over {opt?.range ? `${formatNumber(opt.range[0], 0)}–${formatNumber(opt.range[1], 0)}` : '–'} {rateUnit}, the rates tested in every trial.
          </p>
        </section>
        <aside className="panel cautions" data-testid="rate-cautions" aria-label="Cautions">
          <h3>⚠ Before using a rate</h3>
          <ul>
            {(cautions.length > 0 ? cautions : rate.cautions).map((c) => (
              <li key={c}>{c}</li>
            ))}
          </ul>
        </aside>
      </div>
      {opt ? <RateCharts opt={opt} rate={rate} rateUnit={rateUnit} yieldUnit={yieldUnit} analysedInterval={atAnalysed ? [rec.lower, rec.upper] : null} /> : <p className="status">Computing the optimum…</p>}
    </div>
  );
}

/** Engine reasons start in lower case and end without a stop; shown as a sentence. */
function sentence(text: string): string {
  const t = text.trim();
  return t === '' ? t : `${t[0].toUpperCase()}${t.slice(1)}${/[.!?]$/.test(t) ? '' : '.'}`;
}

function RateCharts({ opt, rate, rateUnit, yieldUnit, analysedInterval }: { opt: Optimum; rate: RateResponseResult; rateUnit: string; yieldUnit: string; analysedInterval: [number | null, number | null] | null }) {
  const W = 470;
  const m = { l: 60, r: 16 };
  const x = linearScale(opt.curve.map((p) => p.rate), [m.l, W - m.r]);
  const o = opt.optimum;
  const band = opt.profitableLower !== null && opt.profitableUpper !== null ? [opt.profitableLower, opt.profitableUpper] : null;
  const quant = rate.siteOptima.quantiles;
  return (
    <div className="panel-row">
      <ChartFrame
        title="Response to rate and net return"
        testId="rate-curve"
        csv={() =>
          toCsv(
            [
              { header: 'rate', value: (i: number) => opt.curve[i].rate },
              { header: 'pooled_gain', value: (i: number) => opt.curve[i].gain },
              { header: 'net_return', value: (i: number) => opt.curve[i].net },
              ...opt.trialCurves.map((t) => ({ header: `gain_${t.trial}`, value: (i: number) => t.gains[i] })),
            ],
            opt.curve.map((_, i) => i),
          )
        }
        note={`Top: thin grey lines are each trial's fitted yield gain over the rates every trial tested (${opt.trialCurves.length} trials), the thick line their mean (the pooled curve). Bottom: net return = gain − price ratio ${Number(opt.priceRatio.toPrecision(4))} × rate, in ${yieldUnit}; solid line at the optimum${analysedInterval ? ' with its interval' : ''}, hatched band the profitable range.`}
      >
        <RateChart
          width={700}
          rateUnit={rateUnit}
          yieldUnit={yieldUnit}
          trials={opt.trialCurves.map((t) => ({ id: t.trial, label: t.trial, points: t.gains.map((g, i) => ({ rate: opt.curve[i].rate, value: g })) }))}
          pooled={{ id: 'pooled', label: 'pooled', points: opt.curve.map((p) => ({ rate: p.rate, value: p.gain })) }}
          netReturn={opt.curve.map((p) => ({ rate: p.rate, value: p.net }))}
          optimum={o === null ? null : { rate: o, lower: analysedInterval?.[0] ?? null, upper: analysedInterval?.[1] ?? null }}
          profitable={band ? { lower: band[0], upper: band[1] } : null}
          title="Response to rate and net return"
        />
      </ChartFrame>
      <ChartFrame
        title="Where each site's own optimum falls"
        testId="site-optima"
        csv={() => toCsv([{ header: 'trial', value: (t: Optimum['trialOptima'][number]) => t.trial }, { header: 'optimum', value: (t) => t.optimum }], opt.trialOptima)}
        note={`Each mark is one trial's optimum at these prices (held within its tested rates). At the analysed prices: median ${formatNumber(quant.find((q) => q.p === 0.5)?.value ?? null, 0)} ${rateUnit}, ${rate.siteOptima.shareNoInputPays === null ? '' : `${Math.round(rate.siteOptima.shareNoInputPays * 100)}% of trials where no input pays`}.`}
      >
        <svg className="chart-svg" width={W} height={120} viewBox={`0 0 ${W} 120`} role="img" aria-label="Site optima">
          <line x1={m.l} x2={W - m.r} y1={70} y2={70} stroke="#1b1f24" />
          {x.ticks.map((t) => (
            <text key={t} x={x(t)} y={88} fontSize={11} textAnchor="middle">
              {formatNumber(t, 0)}
            </text>
          ))}
          {opt.trialOptima.map((t, i) => (
            <circle key={t.trial} cx={x(t.optimum)} cy={60 - (i % 5) * 9} r={3.5} fill="#23507a" fillOpacity={0.6}>
              <title>{`${t.trial}: ${formatNumber(t.optimum, 1)}`}</title>
            </circle>
          ))}
          {o !== null ? <line x1={x(o)} x2={x(o)} y1={10} y2={75} stroke="#1b1f24" strokeWidth={2} /> : null}
          <text x={(m.l + W - m.r) / 2} y={112} fontSize={12} textAnchor="middle">
            Trial optimum ({rateUnit}); the line is the pooled optimum
          </text>
        </svg>
      </ChartFrame>
    </div>
  );
}
