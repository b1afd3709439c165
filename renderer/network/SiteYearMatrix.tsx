// Trials by site (rows) and year (columns); each cell names the design and opens the trial.
import type { TrialOverview } from '../app/views.js';
import { designShort, siteYearMatrix } from '../shape/siteYearMatrix.js';

const MAX_SITES = 40;

export function SiteYearMatrix({ trials, onOpen }: { trials: readonly TrialOverview[]; onOpen: (id: number) => void }) {
  const m = siteYearMatrix(trials);
  if (m.sites.length > MAX_SITES) return <p className="muted">{m.sites.length} sites over {m.years.length} years: see the table below.</p>;
  return (
    <table className="data-table compact matrix" aria-label="Trials by site and year">
      <caption>Trials by site and year</caption>
      <thead>
        <tr>
          <th scope="col">Site</th>
          {m.years.map((y) => (
            <th scope="col" key={y} className="num">
              {y}
            </th>
          ))}
        </tr>
      </thead>
      <tbody>
        {m.sites.map((site, i) => (
          <tr key={site}>
            <th scope="row">{site}</th>
            {m.cells[i].map((cell, j) => (
              <td key={m.years[j]} className="num">
                {cell.map((t) => (
                  <button key={t.id} type="button" className="cell-trial" onClick={() => onOpen(t.id)} aria-label={`${t.label}, ${t.design.replace(/-/g, ' ')}`} title={`${t.label}: ${t.design.replace(/-/g, ' ')}`}>
                    {designShort(t.design)}
                  </button>
                ))}
              </td>
            ))}
          </tr>
        ))}
      </tbody>
      <tfoot>
        <tr>
          <td colSpan={m.years.length + 1} className="muted small-text">
            RB randomised blocks · RC row-column · LS Latin square · CR completely randomised
          </td>
        </tr>
      </tfoot>
    </table>
  );
}
