// The forest plot, pure SVG: one row per trial (square of area proportional to its weight,
// line for its interval), the pooled estimate as a diamond, the prediction interval for a new
// site as a dashed bar with end caps, a solid line at zero and a dashed one at the break-even
// threshold. Every mark is also labelled in text, so nothing is told by colour alone. No hooks:
// it renders with react-dom/server for the report as well as on screen.
import type { ForestData, ForestRow } from '../../../src/report/charts/chartData.js';
import { forestLayout } from './forestLayout.js';

export interface ForestChartProps extends ForestData {
  readonly title?: string;
  readonly onRowHover?: (row: ForestRow | null, index: number) => void;
  readonly onRowClick?: (row: ForestRow, index: number) => void;
}

const INK = '#14181f';
const MUTED = '#5b6470';
const MARK = '#23507a';
const POOLED = '#8c3b5e';

export function ForestChart(props: ForestChartProps) {
  const L = forestLayout(props);
  const unit = props.unit ? ` (${props.unit})` : '';
  const { onRowHover, onRowClick } = props;
  return (
    <svg
      className="chart-svg forest-chart"
      data-testid="forest-plot"
      xmlns="http://www.w3.org/2000/svg"
      width={L.width}
      height={L.height}
      viewBox={`0 0 ${L.width} ${L.height}`}
      role="img"
      aria-label={props.title ?? `Forest plot${unit}`}
      fontFamily="system-ui, 'DejaVu Sans', sans-serif"
      fontSize={11}
    >
      <g fill={MUTED} fontWeight={600}>
        <text x={4} y={L.headerY}>Site and year</text>
        <text x={(L.plotLeft + L.plotRight) / 2} y={L.headerY} textAnchor="middle">{`Effect${unit}`}</text>
        <text x={L.numbersX} y={L.headerY}>Estimate (interval)</text>
        <text x={L.weightX} y={L.headerY} textAnchor="end">Weight</text>
      </g>
      {L.rows.length > 0 && (
        <rect x={L.plotLeft} y={L.rowsTop} width={L.plotRight - L.plotLeft} height={L.rowsBottom - L.rowsTop} fill="#f7f6f2" />
      )}
      <line x1={L.zeroX} x2={L.zeroX} y1={L.rowsTop} y2={L.axisY} stroke={INK} strokeWidth={1} data-testid="forest-zero" />
      {L.thresholdX !== null && (
        <g data-testid="forest-threshold">
          <line x1={L.thresholdX} x2={L.thresholdX} y1={L.rowsTop} y2={L.axisY} stroke={INK} strokeWidth={1} strokeDasharray="2 3" />
          <text x={L.thresholdX + 3} y={L.rowsTop - 2} fontSize={9} fill={MUTED}>break-even</text>
        </g>
      )}
      {L.rows.map((r, i) => (
        <g
          key={`${r.row.trial}-${i}`}
          data-testid="forest-row"
          data-trial={r.row.trial}
          onMouseEnter={onRowHover ? () => onRowHover(r.row, i) : undefined}
          onMouseLeave={onRowHover ? () => onRowHover(null, i) : undefined}
          onClick={onRowClick ? () => onRowClick(r.row, i) : undefined}
          style={onRowClick ? { cursor: 'pointer' } : undefined}
        >
          <title>{`${r.label}: ${r.numbers}, weight ${r.weight}`}</title>
          <text x={4} y={r.y + 4} fill={INK}>{r.label}</text>
          <line x1={r.x1} x2={r.x2} y1={r.y} y2={r.y} stroke={MARK} strokeWidth={1.2} />
          <rect x={r.cx - r.side / 2} y={r.y - r.side / 2} width={r.side} height={r.side} fill={MARK} />
          <text x={L.numbersX} y={r.y + 4} fill={INK}>{r.numbers}</text>
          <text x={L.weightX} y={r.y + 4} fill={MUTED} textAnchor="end">{r.weight}</text>
        </g>
      ))}
      {L.pooled && (
        <g data-testid="forest-pooled">
          <line x1={4} x2={L.width - 4} y1={L.pooled.y - 11} y2={L.pooled.y - 11} stroke="#c9c6bd" />
          <text x={4} y={L.pooled.y + 4} fontWeight={700} fill={INK}>Pooled (mean effect)</text>
          <polygon points={L.pooled.points} fill={POOLED} stroke={INK} strokeWidth={0.8} />
          <text x={L.numbersX} y={L.pooled.y + 4} fontWeight={700} fill={INK}>{L.pooled.numbers}</text>
        </g>
      )}
      {L.prediction && (
        <g data-testid="forest-prediction">
          <text x={4} y={L.prediction.y + 4} fill={INK} fontStyle="italic">New site (prediction)</text>
          <line x1={L.prediction.x1} x2={L.prediction.x2} y1={L.prediction.y} y2={L.prediction.y} stroke={POOLED} strokeWidth={2.5} strokeDasharray="6 3" />
          <line x1={L.prediction.x1} x2={L.prediction.x1} y1={L.prediction.y - 5} y2={L.prediction.y + 5} stroke={POOLED} strokeWidth={2} />
          <line x1={L.prediction.x2} x2={L.prediction.x2} y1={L.prediction.y - 5} y2={L.prediction.y + 5} stroke={POOLED} strokeWidth={2} />
          <text x={L.numbersX} y={L.prediction.y + 4} fill={INK} fontStyle="italic">{L.prediction.numbers}</text>
        </g>
      )}
      <g data-testid="forest-axis">
        <line x1={L.plotLeft} x2={L.plotRight} y1={L.axisY} y2={L.axisY} stroke={INK} />
        {L.ticks.map((t) => (
          <g key={t.x}>
            <line x1={t.x} x2={t.x} y1={L.axisY} y2={L.axisY + 4} stroke={INK} />
            <text x={t.x} y={L.axisY + 15} textAnchor="middle" fill={INK}>{t.label}</text>
          </g>
        ))}
        <text x={(L.plotLeft + L.plotRight) / 2} y={L.axisY + 31} textAnchor="middle" fill={MUTED}>
          {`Effect${unit}; square area ∝ weight; solid line at 0${L.thresholdX !== null ? ', dotted at break-even' : ''}`}
        </text>
      </g>
    </svg>
  );
}
