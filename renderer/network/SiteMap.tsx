// Sites on a plain plane from their coordinates (no map tiles). Markers are buttons: choosing
// one narrows the trial table to that site. Every marker carries its code as a label.
import { useMemo } from 'react';
import type { SiteEntry } from '../app/views.js';
import { layoutSites } from '../shape/siteMap.js';
import { toCsv } from '../shape/csv.js';
import { ChartFrame } from '../charts/ChartFrame.js';

const WIDTH = 400;
const HEIGHT = 290;
const MARGIN = 34;

interface Props {
  readonly sites: readonly SiteEntry[];
  readonly selected: number | null;
  readonly onSelect: (site: number | null) => void;
}

export function SiteMap({ sites, selected, onSelect }: Props) {
  const layout = useMemo(() => layoutSites(sites, WIDTH, HEIGHT, MARGIN), [sites]);
  const csv = () =>
    toCsv(
      [
        { header: 'code', value: (s: SiteEntry) => s.code },
        { header: 'name', value: (s) => s.name },
        { header: 'region', value: (s) => s.region },
        { header: 'latitude', value: (s) => s.lat },
        { header: 'longitude', value: (s) => s.lon },
        { header: 'trials', value: (s) => s.trials },
        { header: 'years', value: (s) => s.years.join(' ') },
      ],
      sites,
    );
  return (
    <ChartFrame title="Sites" csv={csv} testId="site-map" note="Positions from latitude and longitude (north up); circle size grows with the number of trials. Choose a site to list only its trials.">
      <svg className="chart-svg site-map" width={WIDTH} height={HEIGHT} viewBox={`0 0 ${WIDTH} ${HEIGHT}`} role="group" aria-label="Sites placed by their coordinates">
        <rect x={0.5} y={0.5} width={WIDTH - 1} height={HEIGHT - 1} fill="#fbfaf6" stroke="#c9c6bb" />
        {layout.tenKm ? (
          <g className="scale-bar" aria-hidden="true">
            <line x1={MARGIN} x2={MARGIN + layout.tenKm} y1={HEIGHT - 12} y2={HEIGHT - 12} stroke="#444" strokeWidth={2} />
            <text x={MARGIN + layout.tenKm + 6} y={HEIGHT - 8} fontSize={11} fill="#444">
              10 km
            </text>
          </g>
        ) : null}
        <text x={WIDTH - 14} y={22} fontSize={12} textAnchor="end" fill="#444" aria-hidden="true">
          ↑ N
        </text>
        {layout.placed.map((s) => {
          const isSelected = s.id === selected;
          const choose = () => onSelect(isSelected ? null : s.id);
          return (
            <g
              key={s.id}
              className={`site-marker ${isSelected ? 'selected' : ''}`}
              role="button"
              tabIndex={0}
              aria-pressed={isSelected}
              aria-label={`${s.name} (${s.code}), ${s.trials} trials`}
              onClick={choose}
              onKeyDown={(e) => {
                if (e.key === 'Enter' || e.key === ' ') {
                  e.preventDefault();
                  choose();
                }
              }}
            >
              <title>{`${s.name} (${s.code}): ${s.trials} trials`}</title>
              <circle cx={s.x} cy={s.y} r={s.r} fill={isSelected ? '#d9822b' : '#23507a'} fillOpacity={0.85} stroke={isSelected ? '#000' : '#fff'} strokeWidth={isSelected ? 2.5 : 1.5} />
              <text x={s.x + s.r + 4} y={s.y + 4} fontSize={12} fontWeight={isSelected ? 700 : 500} fill="#1b1b1b">
                {s.code}
              </text>
            </g>
          );
        })}
      </svg>
      {layout.unplaced.length > 0 ? <p className="muted">Without coordinates: {layout.unplaced.map((s) => s.code).join(', ')}</p> : null}
    </ChartFrame>
  );
}
