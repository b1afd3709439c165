// The trial's ANOVA table, adjusted means table and contrasts table.
import type { TrialAnalysis } from '../app/views.js';
import { formatNumber, formatP } from '../shape/format.js';

/** A table's header: the first column names the rows, the others hold numbers (right-aligned). */
function HeaderRow({ first, numeric }: { first: string; numeric: readonly string[] }) {
  return (
    <thead>
      <tr>
        <th scope="col">{first}</th>
        {numeric.map((h) => (
          <th key={h} scope="col" className="num">
            {h}
          </th>
        ))}
      </tr>
    </thead>
  );
}

const TERM_WORDS: Record<string, string> = { block: 'Blocks', row: 'Rows', col: 'Columns', treatment: 'Treatments' };

export function AnovaTable({ anova, unit }: { anova: TrialAnalysis['anova']; unit: string | null }) {
  return (
    <div className="table-block">
      <table className="data-table" data-testid="anova-table">
        <caption>Analysis of variance (sequential sums of squares, treatments after the design terms)</caption>
        <HeaderRow first="Source" numeric={['df', 'Sum of squares', 'Mean square', 'F', 'P']} />
        <tbody>
          {anova.rows.map((r) => (
            <tr key={r.term} data-term={r.term}>
              <th scope="row">{TERM_WORDS[r.term] ?? r.term}</th>
              <td className="num">{r.df}</td>
              <td className="num">{formatNumber(r.ss, 4)}</td>
              <td className="num">{formatNumber(r.ms, 4)}</td>
              <td className="num" data-testid="anova-f">
                {formatNumber(r.f, 2)}
              </td>
              <td className="num">{formatP(r.p)}</td>
            </tr>
          ))}
          <tr data-term="residual">
            <th scope="row">Residual</th>
            <td className="num" data-testid="anova-residual-df">
              {anova.residual.df}
            </td>
            <td className="num">{formatNumber(anova.residual.ss, 4)}</td>
            <td className="num">{formatNumber(anova.residual.ms, 4)}</td>
            <td />
            <td />
          </tr>
          <tr className="total">
            <th scope="row">Total</th>
            <td className="num">{anova.total.df}</td>
            <td className="num">{formatNumber(anova.total.ss, 4)}</td>
            <td />
            <td />
            <td />
          </tr>
        </tbody>
      </table>
      <p className="muted">
        Grand mean {formatNumber(anova.grandMean, 3)}
        {unit ? ` ${unit}` : ''} · CV {formatNumber(anova.cv, 1)} % · LSD (5 %) {formatNumber(anova.lsd5.value, 3)}
      </p>
    </div>
  );
}

export function MeansTable({ means, labels, unit, confidence }: { means: TrialAnalysis['means']; labels: ReadonlyMap<string, string>; unit: string | null; confidence: number }) {
  return (
    <table className="data-table" data-testid="means-table">
      <caption>
        Adjusted treatment means{unit ? ` (${unit})` : ''} with {Math.round(confidence * 100)} % confidence intervals
      </caption>
      <HeaderRow first="Treatment" numeric={['Plots', 'Mean', 'SE', 'Lower', 'Upper']} />
      <tbody>
        {means.map((m) => (
          <tr key={m.treatment}>
            <th scope="row" title={labels.get(m.treatment)}>
              {m.treatment}
              <span className="muted small-text"> {labels.get(m.treatment) ?? ''}</span>
            </th>
            <td className="num">{m.n}</td>
            <td className="num">{m.estimable ? formatNumber(m.estimate, 3) : 'not estimable'}</td>
            <td className="num">{formatNumber(m.se, 3)}</td>
            <td className="num">{formatNumber(m.lower, 3)}</td>
            <td className="num">{formatNumber(m.upper, 3)}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

export function ContrastsTable({ contrasts, unit }: { contrasts: TrialAnalysis['contrasts']; unit: string | null }) {
  return (
    <table className="data-table" data-testid="contrasts-table">
      <caption>Contrasts{unit ? ` (${unit}; a trend per unit of the factor)` : ''}</caption>
      <HeaderRow first="Contrast" numeric={['Estimate', 'SE', 'df', 'Interval', 'P']} />
      <tbody>
        {contrasts.length === 0 ? (
          <tr>
            <td colSpan={6} className="muted">
              No contrasts: the protocol names no control and no numeric factor.
            </td>
          </tr>
        ) : null}
        {contrasts.map((c) =>
          c.estimable ? (
            <tr key={c.name}>
              <th scope="row" title={c.meaning}>
                {c.name.replace(/_/g, ' ')}
                <span className="muted small-text"> {c.meaning}</span>
              </th>
              <td className="num">{formatNumber(c.estimate, 4)}</td>
              <td className="num">{formatNumber(c.se, 4)}</td>
              <td className="num">{c.df}</td>
              <td className="num">
                {formatNumber(c.lower, 3)} to {formatNumber(c.upper, 3)}
              </td>
              <td className="num">{formatP(c.p)}</td>
            </tr>
          ) : (
            <tr key={c.name}>
              <th scope="row">{c.name.replace(/_/g, ' ')}</th>
              <td colSpan={5} className="muted">
                not estimable here: {c.reason}
              </td>
            </tr>
          ),
        )}
      </tbody>
    </table>
  );
}
