// The rate chart, pure SVG in two panels over one rate axis. Top: each trial's fitted yield
// gain (thin grey lines) and the pooled curve (thick). Bottom: the pooled net return (gain less
// the input's cost in yield units) with the profitable range shaded and hatched, the economic
// optimum as a solid vertical line and its interval as a capped bar. Labels in text beside every
// mark, so nothing depends on colour. No hooks: renders with react-dom/server for the report.
import type { RateData } from '../../../src/report/charts/chartData.js';
import { rateLayout, type Panel } from './rateLayout.js';

export interface RateChartProps extends RateData {
  readonly title?: string;
}

const INK = '#14181f';
const MUTED = '#5b6470';
const POOLED = '#23507a';
const NET = '#8c3b5e';
const RANGE = '#c9b23a';

function YAxis({ p, left, right, label }: { p: Panel; left: number; right: number; label: string }) {
  return (
    <g>
      {p.yTicks.map((t) => (
        <g key={t.y}>
          <line x1={left} x2={right} y1={t.y} y2={t.y} stroke="#e4e1d8" />
          <text x={left - 5} y={t.y + 4} textAnchor="end" fill={INK}>{t.label}</text>
        </g>
      ))}
      {p.zeroY !== null && <line x1={left} x2={right} y1={p.zeroY} y2={p.zeroY} stroke={INK} />}
      <line x1={left} x2={left} y1={p.top} y2={p.bottom} stroke={INK} />
      <text x={left} y={p.top - 8} fill={MUTED} fontWeight={600}>{label}</text>
    </g>
  );
}

export function RateChart(props: RateChartProps) {
  const L = rateLayout(props);
  const yu = props.yieldUnit ? ` (${props.yieldUnit})` : '';
  const ru = props.rateUnit ? ` (${props.rateUnit})` : '';
  return (
    <svg
      className="chart-svg rate-chart"
      data-testid="rate-chart"
      xmlns="http://www.w3.org/2000/svg"
      width={L.width}
      height={L.height}
      viewBox={`0 0 ${L.width} ${L.height}`}
      role="img"
      aria-label={props.title ?? 'Response to rate and net return'}
      fontFamily="system-ui, 'DejaVu Sans', sans-serif"
      fontSize={11}
    >
      <defs>
        <pattern id="rate-profitable-hatch" width={6} height={6} patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
          <line x1={0} y1={0} x2={0} y2={6} stroke={RANGE} strokeWidth={2} />
        </pattern>
      </defs>
      <YAxis p={L.gain} left={L.left} right={L.right} label={`Yield gain over the control${yu}`} />
      <g data-testid="rate-trial-curves" fill="none" stroke="#9aa1a9" strokeWidth={0.8} strokeOpacity={0.7}>
        {L.trialPaths.map((t) => (
          <path key={t.id} d={t.d}>
            <title>{t.label}</title>
          </path>
        ))}
      </g>
      {L.pooledPath && <path data-testid="rate-pooled-curve" d={L.pooledPath} fill="none" stroke={POOLED} strokeWidth={3} />}
      <g fontSize={10} fill={INK}>
        <rect x={L.right - 176} y={L.gain.bottom - 40} width={172} height={34} fill="#ffffff" fillOpacity={0.85} />
        <line x1={L.right - 170} x2={L.right - 148} y1={L.gain.bottom - 30} y2={L.gain.bottom - 30} stroke="#9aa1a9" />
        <text x={L.right - 144} y={L.gain.bottom - 27}>each trial (thin)</text>
        <line x1={L.right - 170} x2={L.right - 148} y1={L.gain.bottom - 16} y2={L.gain.bottom - 16} stroke={POOLED} strokeWidth={3} />
        <text x={L.right - 144} y={L.gain.bottom - 13}>pooled curve (thick)</text>
      </g>
      <YAxis p={L.net} left={L.left} right={L.right} label={`Net return of the pooled curve${yu}, input cost deducted`} />
      {L.profitable && (
        <g data-testid="rate-profitable">
          <rect x={L.profitable.x1} y={L.net.top} width={Math.max(1, L.profitable.x2 - L.profitable.x1)} height={L.net.bottom - L.net.top} fill={RANGE} fillOpacity={0.18} />
          <rect x={L.profitable.x1} y={L.net.bottom - 8} width={Math.max(1, L.profitable.x2 - L.profitable.x1)} height={8} fill="url(#rate-profitable-hatch)" />
          <text x={L.profitable.x1 + 3} y={L.net.bottom - 12} fontSize={10} fill={INK}>{L.profitable.label}</text>
        </g>
      )}
      {L.netPath && <path data-testid="rate-net-curve" d={L.netPath} fill="none" stroke={NET} strokeWidth={2.2} />}
      {L.optimum && (
        <g data-testid="rate-optimum">
          <line x1={L.optimum.x} x2={L.optimum.x} y1={L.gain.top} y2={L.net.bottom} stroke={INK} strokeWidth={1.2} />
          {L.optimum.x1 !== null && L.optimum.x2 !== null && (
            <g stroke={INK} strokeWidth={2}>
              <line x1={L.optimum.x1} x2={L.optimum.x2} y1={L.net.top + 10} y2={L.net.top + 10} />
              <line x1={L.optimum.x1} x2={L.optimum.x1} y1={L.net.top + 5} y2={L.net.top + 15} />
              <line x1={L.optimum.x2} x2={L.optimum.x2} y1={L.net.top + 5} y2={L.net.top + 15} />
            </g>
          )}
          <text
            x={L.optimum.x + (L.optimum.x > (L.left + L.right) / 2 ? -4 : 4)}
            y={L.net.bottom - 28}
            textAnchor={L.optimum.x > (L.left + L.right) / 2 ? 'end' : 'start'}
            fontSize={10}
            fill={INK}
          >
            {L.optimum.label}
          </text>
        </g>
      )}
      <g>
        <line x1={L.left} x2={L.right} y1={L.net.bottom} y2={L.net.bottom} stroke={INK} />
        {L.xTicks.map((t) => (
          <g key={t.x}>
            <line x1={t.x} x2={t.x} y1={L.net.bottom} y2={L.net.bottom + 4} stroke={INK} />
            <text x={t.x} y={L.net.bottom + 15} textAnchor="middle" fill={INK}>{t.label}</text>
            <line x1={t.x} x2={t.x} y1={L.gain.bottom} y2={L.gain.bottom + 4} stroke={INK} />
            <text x={t.x} y={L.gain.bottom + 15} textAnchor="middle" fill={INK}>{t.label}</text>
          </g>
        ))}
        <text x={(L.left + L.right) / 2} y={L.net.bottom + 32} textAnchor="middle" fill={MUTED}>{`Rate${ru}`}</text>
      </g>
    </svg>
  );
}
