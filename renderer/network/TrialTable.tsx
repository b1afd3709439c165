// Trials by site and year with their design, size, traits, mean, CV and data-quality flags.
// A row opens its trial (click, or Enter on the row's button).
import type { TrialOverview } from '../app/views.js';
import { VirtualTable } from '../ui/VirtualTable.js';
import { flagWord } from '../shape/trialTable.js';
import { formatNumber } from '../shape/format.js';

const ROW_HEIGHT = 34;

interface Props {
  readonly rows: readonly TrialOverview[];
  readonly unit: string | null;
  readonly onOpen: (id: number) => void;
}

export function TrialTable({ rows, unit, onOpen }: Props) {
  const head = (
    <tr>
      <th scope="col">Trial</th>
      <th scope="col">Site</th>
      <th scope="col" className="num">
        Year
      </th>
      <th scope="col">Design</th>
      <th scope="col" className="num">
        Plots
      </th>
      <th scope="col" className="num">
        Treat&shy;ments
      </th>
      <th scope="col">Traits</th>
      <th scope="col" className="num">
        Mean{unit ? ` (${unit})` : ''}
      </th>
      <th scope="col" className="num">
        CV %
      </th>
      <th scope="col" className="num">
        Excl.
      </th>
      <th scope="col">Data-quality flags</th>
    </tr>
  );
  return (
    <VirtualTable
      rows={rows}
      rowHeight={ROW_HEIGHT}
      height={420}
      columns={11}
      head={head}
      label="Trials by site and year"
      testId="trial-table"
      className="trial-table"
      renderRow={(t) => (
        <tr key={t.id} data-testid="trial-row" data-trial-id={t.id} className="clickable" onClick={() => onOpen(t.id)}>
          <th scope="row">
            <button type="button" className="link" onClick={(e) => (e.stopPropagation(), onOpen(t.id))} aria-label={`Open trial ${t.label}`}>
              {t.label}
            </button>
          </th>
          <td>{t.site}</td>
          <td className="num">{t.year}</td>
          <td>{t.design.replace(/-/g, ' ')}</td>
          <td className="num">{t.plots}</td>
          <td className="num">{t.treatments}</td>
          <td className="ellipsis" title={t.traits.join(', ')}>
            {t.traits.join(', ')}
          </td>
          <td className="num">{formatNumber(t.mean, 2)}</td>
          <td className="num">{formatNumber(t.cv, 1)}</td>
          <td className="num">{t.excluded > 0 ? t.excluded : ''}</td>
          <td className="flags-cell">
            {t.flags.length === 0 ? <span className="muted">none</span> : null}
            {uniqueFlags(t.flags).map((f) => (
              <span key={f.code} className={`flag flag-${f.code}`} title={f.message}>
                {flagWord(f.code)}
              </span>
            ))}
          </td>
        </tr>
      )}
    />
  );
}

function uniqueFlags(flags: TrialOverview['flags']): TrialOverview['flags'] {
  const seen = new Set<string>();
  return flags.filter((f) => (seen.has(f.code) ? false : (seen.add(f.code), true)));
}
