// One plot's record, and setting it aside (with a reason) or taking it back into the analysis.
import { useEffect, useState, type FormEvent } from 'react';
import type { PlotDetail } from '../app/views.js';
import { formatNumber } from '../shape/format.js';

interface Props {
  readonly plot: PlotDetail | null;
  readonly unit: string | null;
  readonly treatmentLabel: (code: string) => string;
  readonly onExclude: (plot: number, reason: string) => Promise<string | null>;
  readonly onInclude: (plot: number) => Promise<string | null>;
}

export function PlotRecord({ plot, unit, treatmentLabel, onExclude, onInclude }: Props) {
  const [reason, setReason] = useState('');
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  useEffect(() => {
    setReason('');
    setError(null);
  }, [plot?.id]);
  if (!plot)
    return (
      <aside className="plot-record empty" data-testid="plot-record" aria-label="Plot record">
        <h3>Plot record</h3>
        <p className="muted">Choose a plot in the layout (click it, or Tab to it and press Enter) to see its record and to exclude it from the analysis.</p>
      </aside>
    );
  const act = async (action: () => Promise<string | null>) => {
    setBusy(true);
    setError(await action());
    setBusy(false);
  };
  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (reason.trim()) void act(() => onExclude(plot.id, reason.trim()));
  };
  const u = unit ? ` ${unit}` : '';
  const rows: [string, string][] = [
    ['Treatment', `${plot.treatment} — ${treatmentLabel(plot.treatment)}`],
    ['Block', plot.block ?? '–'],
    ['Row, column', plot.row !== null && plot.col !== null ? `${plot.row}, ${plot.col}` : '–'],
    ['Value', plot.value === null ? 'missing' : `${formatNumber(plot.value, 3)}${u}`],
    ['Fitted', `${formatNumber(plot.fitted, 3)}${plot.fitted === null ? '' : u}`],
    ['Residual', `${formatNumber(plot.residual, 3)}${plot.residual === null ? '' : u}`],
    ['Studentised residual', formatNumber(plot.studentised, 2)],
    ['Leverage', formatNumber(plot.leverage, 3)],
    ["Cook's distance", formatNumber(plot.cooks, 3)],
  ];
  return (
    <aside className="plot-record" data-testid="plot-record" aria-label={`Record of plot ${plot.label}`}>
      <h3>Plot {plot.label}</h3>
      <dl>
        {rows.map(([k, v]) => (
          <div key={k}>
            <dt>{k}</dt>
            <dd>{v}</dd>
          </div>
        ))}
      </dl>
      {plot.excluded ? (
        <div className="excluded-note">
          <p>
            <strong>Excluded</strong> from every analysis. Reason: <q data-testid="plot-reason">{plot.reason}</q>
          </p>
          <button type="button" data-testid="include-button" onClick={() => act(() => onInclude(plot.id))} disabled={busy}>
            Take back into the analysis
          </button>
        </div>
      ) : (
        <form onSubmit={submit} className="exclude-form">
          <label htmlFor="exclude-reason">Reason for excluding this plot</label>
          <textarea id="exclude-reason" data-testid="exclude-reason" rows={2} value={reason} onChange={(e) => setReason(e.target.value)} placeholder="e.g. waterlogged corner, sprayer skipped" />
          <button type="submit" data-testid="exclude-button" disabled={busy || !reason.trim()}>
            Exclude plot
          </button>
        </form>
      )}
      {error ? (
        <p className="status status-error" role="alert">
          {error}
        </p>
      ) : null}
    </aside>
  );
}
