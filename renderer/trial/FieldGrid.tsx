// The field layout: one cell per plot by row and column (or by block and position), coloured by
// value or residual, with the treatment code and the number written in every cell and excluded
// plots crossed out, so colour is never the only carrier. Cells are buttons.
import { useMemo } from 'react';
import type { PlotDetail } from '../app/views.js';
import { layoutFieldGrid, type GridColouring } from '../shape/fieldGrid.js';
import { formatNumber, decimalsFor } from '../shape/format.js';
import { toCsv } from '../shape/csv.js';
import { ChartFrame } from '../charts/ChartFrame.js';

interface Props {
  readonly plots: readonly PlotDetail[];
  readonly colouring: GridColouring;
  readonly onColouring: (c: GridColouring) => void;
  readonly selected: number | null;
  readonly onSelect: (plot: number) => void;
  readonly unit: string | null;
  readonly title: string;
  readonly exportName: string;
}

const LABEL_W = 62;
const HEAD_H = 22;
const MAX_W = 620;
const LEGEND_W = 150;

export function FieldGrid({ plots, colouring, onColouring, selected, onSelect, unit, title, exportName }: Props) {
  const grid = useMemo(() => layoutFieldGrid(plots, colouring), [plots, colouring]);
  const cellW = Math.max(30, Math.min(82, Math.floor((MAX_W - LABEL_W) / Math.max(1, grid.cols))));
  const cellH = cellW >= 56 ? 50 : 38;
  const gridW = LABEL_W + grid.cols * cellW + 2;
  const width = gridW + LEGEND_W;
  const height = Math.max(HEAD_H + grid.rows * cellH + 2, HEAD_H + (grid.legend.length + 2) * 20 + 8);
  const showText = cellW >= 44;
  const scale = Math.max(...plots.map((p) => Math.abs(p.value ?? 0)), 0);
  const dec = decimalsFor(scale);
  const csv = () =>
    toCsv(
      [
        { header: 'plot', value: (p: PlotDetail) => p.label },
        { header: 'treatment', value: (p) => p.treatment },
        { header: 'block', value: (p) => p.block },
        { header: 'row', value: (p) => p.row },
        { header: 'column', value: (p) => p.col },
        { header: 'value', value: (p) => p.value },
        { header: 'residual', value: (p) => p.residual },
        { header: 'excluded', value: (p) => p.excluded },
        { header: 'reason', value: (p) => p.reason },
      ],
      plots,
    );
  const legendTitle = colouring === 'value' ? `Value${unit ? ` (${unit})` : ''}` : `Residual${unit ? ` (${unit})` : ''}`;
  return (
    <ChartFrame title={title} exportName={exportName} csv={csv} testId="field-grid" note={grid.basis === 'row-column' ? 'Drawn by field row and column.' : 'Positions are not recorded: one line per block, plots in stored order.'}>
      <div className="grid-controls" role="radiogroup" aria-label="Colour the plots by">
        <span>Colour by</span>
        {(['value', 'residual'] as const).map((c) => (
          <label key={c} className="radio">
            <input type="radio" name="grid-colouring" value={c} checked={colouring === c} onChange={() => onColouring(c)} />
            {c === 'value' ? 'measured value' : 'residual'}
          </label>
        ))}
      </div>
      <div className="grid-and-legend">
        <svg className="chart-svg field-svg" width={width} height={height} viewBox={`0 0 ${width} ${height}`} role="group" aria-label={`Field layout, ${plots.length} plots`}>
          <defs>
            <pattern id="excluded-hatch" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
              <rect width="6" height="6" fill="#d4d4d4" />
              <line x1="0" y1="0" x2="0" y2="6" stroke="#9a9a9a" strokeWidth="2" />
            </pattern>
          </defs>
          {grid.colLabels.map((c, i) => (
            <text key={`c${i}`} x={LABEL_W + i * cellW + cellW / 2} y={HEAD_H - 7} fontSize={11} textAnchor="middle" fill="#444">
              {grid.basis === 'row-column' ? `Col ${c}` : c}
            </text>
          ))}
          {grid.rowLabels.map((r, i) => (
            <text key={`r${i}`} x={LABEL_W - 6} y={HEAD_H + i * cellH + cellH / 2 + 4} fontSize={11} textAnchor="end" fill="#444">
              {r}
            </text>
          ))}
          {grid.cells.map((cell) => {
            const p = cell.plot;
            const x = LABEL_W + cell.gridCol * cellW;
            const y = HEAD_H + cell.gridRow * cellH;
            const isSel = p.id === selected;
            const shown = colouring === 'value' ? p.value : p.residual;
            const label = `Plot ${p.label}, treatment ${p.treatment}${p.block ? `, block ${p.block}` : ''}, value ${formatNumber(p.value, dec)}${unit ? ` ${unit}` : ''}${
              p.excluded ? `, excluded: ${p.reason ?? ''}` : p.value === null ? ', missing' : ''
            }`;
            return (
              <g
                key={p.id}
                data-testid="field-plot"
                data-plot-id={p.id}
                data-plot-label={p.label}
                data-state={cell.state}
                className={`plot-cell ${isSel ? 'selected' : ''}`}
                role="button"
                tabIndex={0}
                aria-pressed={isSel}
                aria-label={label}
                onClick={() => onSelect(p.id)}
                onKeyDown={(e) => {
                  if (e.key === 'Enter' || e.key === ' ') {
                    e.preventDefault();
                    onSelect(p.id);
                  }
                }}
              >
                <title>{label}</title>
                <rect x={x + 1} y={y + 1} width={cellW - 2} height={cellH - 2} fill={cell.state === 'excluded' ? 'url(#excluded-hatch)' : cell.fill} stroke={isSel ? '#000' : '#8f8b80'} strokeWidth={isSel ? 3 : 1} />
                {cell.state === 'excluded' ? <path d={`M${x + 5},${y + 5} L${x + cellW - 5},${y + cellH - 5} M${x + cellW - 5},${y + 5} L${x + 5},${y + cellH - 5}`} stroke="#555" strokeWidth={1.5} /> : null}
                {showText ? (
                  <>
                    <text x={x + cellW / 2} y={y + cellH / 2 - (cellH >= 50 ? 4 : 1)} fontSize={12} fontWeight={700} textAnchor="middle" fill={cell.state === 'excluded' ? '#222' : cell.textColour}>
                      {p.treatment}
                    </text>
                    {cellH >= 50 ? (
                      <text x={x + cellW / 2} y={y + cellH / 2 + 13} fontSize={11} textAnchor="middle" fill={cell.state === 'excluded' ? '#222' : cell.textColour}>
                        {cell.state === 'excluded' ? 'excluded' : cell.state === 'missing' ? 'missing' : formatNumber(shown, colouring === 'residual' ? Math.max(dec, 2) : dec)}
                      </text>
                    ) : null}
                  </>
                ) : null}
              </g>
            );
          })}
          <g className="legend" transform={`translate(${gridW + 16}, ${HEAD_H})`} aria-label={`Colour scale: ${legendTitle}`}>
            <text x={0} y={0} fontSize={12} fontWeight={600} fill="#222">
              {legendTitle}
            </text>
            {grid.legend
              .slice()
              .reverse()
              .map((s, i) => (
                <g key={s.value} transform={`translate(0, ${12 + i * 20})`}>
                  <rect width={18} height={14} fill={s.colour} stroke="#8f8b80" />
                  <text x={24} y={11} fontSize={11} fill="#222">
                    {formatNumber(s.value, colouring === 'residual' ? Math.max(dec, 2) : dec)}
                  </text>
                </g>
              ))}
            <g transform={`translate(0, ${12 + grid.legend.length * 20 + 6})`}>
              <rect width={18} height={14} fill="url(#excluded-hatch)" stroke="#8f8b80" />
              <text x={24} y={11} fontSize={11} fill="#222">
                excluded (crossed)
              </text>
            </g>
          </g>
        </svg>
      </div>
    </ChartFrame>
  );
}
