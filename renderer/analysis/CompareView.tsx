// Two saved analyses side by side: the spec keys that differ, whether the data were the same,
// and every pooled number with its change.
import type { ResultView } from '../shape/resultView.js';
import { numberChanges, specChanges, type NumberRow } from '../shape/compare.js';
import { formatNumber } from '../shape/format.js';
import { toCsv } from '../shape/csv.js';
import { useHost } from '../app/hostContext.js';
import { savedTitle } from './SavedAnalyses.js';

/** Counts without decimals; tiny values in scientific form so a change never reads as 0.0000. */
function compareNumber(v: number | null): string {
  if (v === null || !Number.isFinite(v)) return '–';
  if (Number.isInteger(v)) return formatNumber(v, 0);
  if (v !== 0 && Math.abs(v) < 5e-5) return v.toExponential(1);
  return formatNumber(v, 4);
}

export function CompareView({ left, right }: { left: ResultView; right: ResultView }) {
  const host = useHost();
  const changes = specChanges(left.spec, right.spec);
  const numbers = numberChanges(left.pooled, right.pooled, left.rateResponse?.recommendation.recommended.rate ?? null, right.rateResponse?.recommendation.recommended.rate ?? null);
  const sameData = left.provenance.dataFingerprint === right.provenance.dataFingerprint;
  const title = (v: ResultView) => savedTitle({ id: v.analysisId ?? 0, name: v.name, trait: v.trait, createdAt: v.provenance.createdAt });
  const csv = () =>
    toCsv(
      [
        { header: 'what', value: (r: NumberRow) => r.what },
        { header: title(left), value: (r) => r.left },
        { header: title(right), value: (r) => r.right },
        { header: 'change', value: (r) => r.change },
      ],
      numbers,
    );
  return (
    <div data-testid="compare-view" className="compare">
      <h2>
        {title(left)} <span className="muted">against</span> {title(right)}
      </h2>
      <div className="compare-grid">
        <div className="compare-col">
          <section className="panel">
            <h3>Data</h3>
            <p data-testid="compare-data">
              {sameData ? '✓ Same data: both ran on data with fingerprint ' : '⚠ Different data: the fingerprints differ ('}
              <span className="mono">{left.provenance.dataFingerprint.slice(0, 12)}…</span>
              {sameData ? '.' : <> against <span className="mono">{right.provenance.dataFingerprint.slice(0, 12)}…</span>): trials, plots or exclusions changed between the runs.</>}
            </p>
            <p className="small-text">
              App versions {left.provenance.appVersion} and {right.provenance.appVersion}; run {new Date(left.provenance.createdAt).toLocaleString('en-GB')} and {new Date(right.provenance.createdAt).toLocaleString('en-GB')}.
            </p>
          </section>
        <section className="panel" data-testid="compare-numbers">
          <h3>
            Numbers{' '}
            <button type="button" className="small" onClick={() => void host.saveFile('comparison.csv', csv())}>
              Export CSV
            </button>
          </h3>
          <table className="data">
            <thead>
              <tr>
                <th>Result</th>
                <th>{title(left)}</th>
                <th>{title(right)}</th>
                <th>Change</th>
              </tr>
            </thead>
            <tbody>
              {numbers.map((r) => (
                <tr key={r.what} className={r.change !== null && Math.abs(r.change) > 1e-12 ? 'changed' : ''}>
                  <td>{r.what}</td>
                  <td className="num">{compareNumber(r.left)}</td>
                  <td className="num">{compareNumber(r.right)}</td>
                  <td className="num">{r.change === null ? '–' : Math.abs(r.change) <= 1e-12 ? 'same' : `${r.change > 0 ? '+' : '−'}${compareNumber(Math.abs(r.change))}`}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
        </div>
        <section className="panel" data-testid="compare-spec">
          <h3>Spec: {changes.length === 0 ? 'identical' : `${changes.length} setting(s) differ`}</h3>
          {changes.length > 0 ? (
            <table className="data spec-table">
              <thead>
                <tr>
                  <th>Setting</th>
                  <th>{title(left)}</th>
                  <th>{title(right)}</th>
                </tr>
              </thead>
              <tbody>
                {changes.map((c) => (
                  <tr key={c.key}>
                    <td className="mono">{c.key}</td>
                    <td className="mono">{c.left}</td>
                    <td className="mono">{c.right}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          ) : null}
        </section>
      </div>
    </div>
  );
}
