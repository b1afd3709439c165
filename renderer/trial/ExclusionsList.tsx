// Every plot set aside in the workspace, with its reason; this trial's first.
import type { ExclusionEntry } from '../app/views.js';

interface Props {
  readonly entries: readonly ExclusionEntry[];
  readonly trial: number;
  readonly onShowPlot: (plot: number) => void;
}

export function ExclusionsList({ entries, trial, onShowPlot }: Props) {
  const here = entries.filter((e) => e.trial === trial);
  const elsewhere = entries.length - here.length;
  return (
    <div className="exclusions" data-testid="exclusions-list">
      {here.length === 0 ? <p className="muted">No plot of this trial is excluded.</p> : null}
      {here.length > 0 ? (
        <table className="data-table compact">
          <caption className="visually-hidden">Plots of this trial excluded from the analysis</caption>
          <thead>
            <tr>
              <th scope="col">Plot</th>
              <th scope="col">Reason</th>
            </tr>
          </thead>
          <tbody>
            {here.map((e) => (
              <tr key={e.plot} data-testid="exclusion-entry" data-plot-id={e.plot}>
                <th scope="row">
                  <button type="button" className="link" onClick={() => onShowPlot(e.plot)} aria-label={`Show plot ${e.label}`}>
                    {e.label}
                  </button>
                </th>
                <td>{e.reason}</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
      <p className="muted">
        {elsewhere === 0 ? 'No exclusions in other trials.' : `${elsewhere} more ${elsewhere === 1 ? 'plot is' : 'plots are'} excluded in other trials of this workspace.`}
      </p>
    </div>
  );
}
