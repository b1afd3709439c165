// The pooled summary and the heterogeneity panel of one contrast: numbers and the same in words.
import type { CompactPooledEntry } from '../shape/resultView.js';
import { formatNumber, formatP, formatProbability } from '../shape/format.js';
import { heterogeneityWords, pooledWords } from '../shape/heterogeneity.js';

interface Props {
  readonly pooled: CompactPooledEntry;
  readonly unit: string;
  readonly threshold: number;
  readonly decimals: number;
  readonly confidence: number;
}

const pct = (v: number | null) => (v === null ? '–' : `${(v * 100).toFixed(1)}%`);

export function PooledSummary({ pooled: p, unit, threshold, decimals, confidence }: Props) {
  const fmt = (v: number | null) => formatNumber(v, decimals);
  const level = `${Math.round(confidence * 100)}%`;
  return (
    <section className="panel" data-testid="pooled-summary" aria-label="Pooled summary">
      <h3>Pooled result: {p.name}</h3>
      <p className="muted small-text">{p.meaning}</p>
      <dl className="numbers">
        <dt>Pooled estimate</dt>
        <dd data-testid="pooled-estimate">
          {fmt(p.estimate)} {unit}
        </dd>
        <dt>{level} confidence interval</dt>
        <dd>
          {fmt(p.lower)} to {fmt(p.upper)}
        </dd>
        <dt>p (effect = 0)</dt>
        <dd>{formatP(p.p)}</dd>
        <dt>{level} prediction interval, new site</dt>
        <dd>
          {fmt(p.predictionLower)} to {fmt(p.predictionUpper)}
        </dd>
        <dt>Chance of a positive response</dt>
        <dd>{formatProbability(p.probPositive)}</dd>
        <dt>Chance of a profitable response (above {fmt(threshold)})</dt>
        <dd>{formatProbability(p.probAboveThreshold)}</dd>
        <dt>Trials pooled</dt>
        <dd>{p.k}</dd>
      </dl>
      <p className="words">{pooledWords(p, unit, threshold, fmt)}</p>
    </section>
  );
}

export function HeterogeneityPanel({ pooled: p, decimals }: Props) {
  const fmt = (v: number | null, d = decimals + 1) => formatNumber(v, d);
  return (
    <section className="panel" data-testid="heterogeneity" aria-label="Heterogeneity">
      <h3>Does the effect differ between site-years?</h3>
      <dl className="numbers">
        <dt>tau² (between-trial variance)</dt>
        <dd>
          {fmt(p.tau2)} <span className="muted">({fmt(p.tau2Lower)} to {fmt(p.tau2Upper)})</span>
          {p.tau2AtBoundary ? <span className="tag">at zero</span> : null}
        </dd>
        <dt>I²</dt>
        <dd>{pct(p.I2)}</dd>
        <dt>H²</dt>
        <dd>{fmt(p.H2, 2)}</dd>
        <dt>Q (df), p</dt>
        <dd>
          {fmt(p.Q, 2)} ({p.Qdf ?? '–'}), {formatP(p.Qp)}
        </dd>
      </dl>
      <details className="small-text">
        <summary>How these were computed</summary>
        <p>{p.method.tau2}</p>
        <p>{p.method.interval}</p>
      </details>
      <p className="words">{heterogeneityWords(p)}</p>
    </section>
  );
}
