// The forest plot, plain SVG: one row per trial (square marker with area proportional to its
// pooling weight, line for its interval), the pooled estimate as a diamond, the new-site
// prediction interval as a dashed bar with end caps and its own label (as the shared chart), a solid line at zero and a dashed
// line at the break-even threshold. Beyond VIRTUAL_FROM rows only the rows in view are drawn,
// so 4,000 trials scroll without freezing the window. Sorting and grouping are the caller's.
import { useMemo, useState, type UIEvent } from 'react';
import type { ForestGroupBlock, ForestRow } from '../shape/forest.js';
import { linearScale } from '../shape/linearScale.js';
import { formatNumber } from '../shape/format.js';
import { visibleRows } from '../shape/virtualWindow.js';

export const VIRTUAL_FROM = 300;
const ROW = 18;
const LABEL_W = 190;
const NUM_W = 210;
const VIEW_H = 520;

interface Props {
  readonly groups: readonly ForestGroupBlock[];
  readonly pooled: { readonly estimate: number | null; readonly lower: number | null; readonly upper: number | null };
  readonly prediction: { readonly lower: number | null; readonly upper: number | null } | null;
  readonly threshold: number;
  readonly unit: string;
  readonly width: number;
  readonly decimals: number;
  readonly onRowHover?: (row: ForestRow | null) => void;
  readonly onRowClick?: (row: ForestRow) => void;
}

type Line = { readonly kind: 'group'; readonly label: string } | { readonly kind: 'row'; readonly row: ForestRow };

export function ForestChart({ groups, pooled, prediction, threshold, unit, width, decimals, onRowHover, onRowClick }: Props) {
  const lines = useMemo(() => {
    const out: Line[] = [];
    for (const g of groups) {
      if (g.label) out.push({ kind: 'group', label: g.label });
      for (const r of g.rows) out.push({ kind: 'row', row: r });
    }
    return out;
  }, [groups]);
  const rows = useMemo(() => lines.flatMap((l) => (l.kind === 'row' ? [l.row] : [])), [lines]);
  const maxShare = useMemo(() => Math.max(1e-12, ...rows.map((r) => r.weightShare ?? 0)), [rows]);
  const x = useMemo(() => {
    const values: (number | null)[] = [0, threshold, pooled.lower, pooled.upper, prediction?.lower ?? null, prediction?.upper ?? null];
    for (const r of rows) values.push(r.lower, r.upper);
    return linearScale(values, [LABEL_W + 10, width - NUM_W - 10]);
  }, [rows, pooled, prediction, threshold, width]);
  const virtual = lines.length > VIRTUAL_FROM;
  const [scrollTop, setScrollTop] = useState(0);
  const win = virtual ? visibleRows(lines.length, ROW, scrollTop, VIEW_H, 10) : { first: 0, end: lines.length, padTop: 0, padBottom: 0 };
  const fmt = (v: number | null) => formatNumber(v, decimals);
  const plotTop = 22;
  const rowsHeight = lines.length * ROW;
  const footer = 86;

  const rowsSvg = (top: number, height: number) => (
    <g>
      {win.first < win.end
        ? lines.slice(win.first, win.end).map((l, j) => {
            const i = win.first + j;
            const y = top + i * ROW + ROW / 2;
            if (l.kind === 'group')
              return (
                <text key={`g${i}`} x={6} y={y + 4} className="forest-group" fontWeight={700} fontSize={12}>
                  {l.label}
                </text>
              );
            const r = l.row;
            const side = 4 + 10 * Math.sqrt((r.weightShare ?? 0) / maxShare);
            return (
              <g
                key={r.trial}
                data-testid="forest-row"
                data-trial={r.trial}
                className="forest-row"
                tabIndex={0}
                role="button"
                aria-label={`Trial ${r.trial}: ${fmt(r.estimate)} (${fmt(r.lower)} to ${fmt(r.upper)}) ${unit}`}
                onMouseEnter={() => onRowHover?.(r)}
                onMouseLeave={() => onRowHover?.(null)}
                onFocus={() => onRowHover?.(r)}
                onClick={() => onRowClick?.(r)}
                onKeyDown={(e) => (e.key === 'Enter' ? onRowClick?.(r) : undefined)}
              >
                <rect x={0} y={y - ROW / 2} width={width} height={ROW} className="forest-hit" />
                <text x={14} y={y + 4} fontSize={12}>
                  {r.trial}
                  {r.site && !r.trial.includes(r.site) ? ` · ${r.site}` : ''}
                  {r.year !== null && !r.trial.includes(String(r.year)) ? ` ${r.year}` : ''}
                </text>
                <line x1={x(r.lower)} x2={x(r.upper)} y1={y} y2={y} stroke="#1b1f24" strokeWidth={1.2} />
                <rect x={x(r.estimate) - side / 2} y={y - side / 2} width={side} height={side} fill="#23507a" />
                <text x={width - NUM_W + 4} y={y + 4} fontSize={12} className="mono">
                  {fmt(r.estimate)} [{fmt(r.lower)}, {fmt(r.upper)}] {r.weightShare === null ? '' : `${(r.weightShare * 100).toFixed(1)}%`}
                </text>
              </g>
            );
          })
        : null}
      <line x1={x(0)} x2={x(0)} y1={top} y2={top + height} stroke="#6b6b6b" strokeWidth={1} />
      <line x1={x(threshold)} x2={x(threshold)} y1={top} y2={top + height} stroke="#9c3d12" strokeWidth={1.2} strokeDasharray="5 4" />
    </g>
  );

  const summary = (top: number) => {
    const e = pooled.estimate;
    const yP = top + 14;
    const yN = top + 36;
    return (
      <g>
        <line x1={x(0)} x2={x(0)} y1={top} y2={top + 46} stroke="#6b6b6b" />
        <line x1={x(threshold)} x2={x(threshold)} y1={top} y2={top + 46} stroke="#9c3d12" strokeWidth={1.2} strokeDasharray="5 4" />
        {e !== null && pooled.lower !== null && pooled.upper !== null ? (
          <g data-testid="forest-pooled">
            <text x={6} y={yP + 4} fontSize={12} fontWeight={700}>
              Pooled (all trials)
            </text>
            <polygon points={`${x(pooled.lower)},${yP} ${x(e)},${yP - 7} ${x(pooled.upper)},${yP} ${x(e)},${yP + 7}`} fill="#1b1f24" />
            <text x={width - NUM_W + 4} y={yP + 4} fontSize={12} fontWeight={700} className="mono">
              {fmt(e)} [{fmt(pooled.lower)}, {fmt(pooled.upper)}]
            </text>
          </g>
        ) : null}
        {prediction && prediction.lower !== null && prediction.upper !== null ? (
          <g data-testid="forest-prediction">
            <text x={6} y={yN + 4} fontSize={12}>
              New site (prediction)
            </text>
            <line x1={x(prediction.lower)} x2={x(prediction.upper)} y1={yN} y2={yN} stroke="#8c3b5e" strokeWidth={1.6} strokeDasharray="5 3" />
            <line x1={x(prediction.lower)} x2={x(prediction.lower)} y1={yN - 4} y2={yN + 4} stroke="#8c3b5e" strokeWidth={1.6} />
            <line x1={x(prediction.upper)} x2={x(prediction.upper)} y1={yN - 4} y2={yN + 4} stroke="#8c3b5e" strokeWidth={1.6} />
            <text x={width - NUM_W + 4} y={yN + 4} fontSize={12} className="mono">
              [{fmt(prediction.lower)}, {fmt(prediction.upper)}]
            </text>
          </g>
        ) : null}
        <line x1={x.range[0]} x2={x.range[1]} y1={top + 50} y2={top + 50} stroke="#1b1f24" />
        {x.ticks.map((t) => (
          <g key={t}>
            <line x1={x(t)} x2={x(t)} y1={top + 50} y2={top + 55} stroke="#1b1f24" />
            <text x={x(t)} y={top + 67} fontSize={11} textAnchor="middle">
              {formatNumber(t, decimals > 2 ? 2 : decimals)}
            </text>
          </g>
        ))}
        <text x={(x.range[0] + x.range[1]) / 2} y={top + 82} fontSize={12} textAnchor="middle">
          Effect ({unit}) — solid line: no effect; dashed: break-even {fmt(threshold)}
        </text>
      </g>
    );
  };

  const head = (
    <>
      <text x={6} y={14} fontSize={12} fontWeight={700}>
        Trial
      </text>
      <text x={(x.range[0] + x.range[1]) / 2} y={14} fontSize={12} fontWeight={700} textAnchor="middle">
        Estimate and interval (marker area ∝ weight)
      </text>
      <text x={width - NUM_W + 4} y={14} fontSize={12} fontWeight={700}>
        Estimate [interval] weight
      </text>
    </>
  );

  if (!virtual) {
    const h = plotTop + rowsHeight + footer + 8;
    return (
      <svg className="chart-svg" data-testid="forest-plot" data-rows={rows.length} width={width} height={h} viewBox={`0 0 ${width} ${h}`} role="img" aria-label="Forest plot">
        {head}
        {rowsSvg(plotTop, rowsHeight)}
        {summary(plotTop + rowsHeight + 4)}
      </svg>
    );
  }
  const onScroll = (e: UIEvent<HTMLDivElement>) => setScrollTop(e.currentTarget.scrollTop);
  return (
    <div data-testid="forest-plot" data-rows={rows.length} data-virtual="true">
      <svg width={width} height={plotTop} aria-hidden="true">
        {head}
      </svg>
      <div className="forest-scroll" style={{ height: VIEW_H, overflowY: 'auto', width: width + 18 }} onScroll={onScroll} tabIndex={0} aria-label={`Forest plot rows, ${rows.length} trials: scroll to see them all`}>
        <svg className="chart-svg" width={width} height={rowsHeight} role="img" aria-label="Forest plot rows">
          {rowsSvg(0, rowsHeight)}
        </svg>
      </div>
      <svg width={width} height={footer + 8} role="img" aria-label="Pooled estimate and axis">
        {summary(4)}
      </svg>
    </div>
  );
}
