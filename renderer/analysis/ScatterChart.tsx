// A small plain-SVG scatter with optional interval whiskers, a fitted line, an identity line and
// flagged points (drawn as open triangles and named, never by colour alone).
import { linearScale } from '../shape/linearScale.js';
import { formatNumber } from '../shape/format.js';

export interface ScatterPoint {
  readonly label: string;
  readonly x: number;
  readonly y: number;
  readonly lower?: number | null;
  readonly upper?: number | null;
  /** Marker area ∝ size (0..1); absent: a fixed size. */
  readonly size?: number;
  readonly flagged?: boolean;
}

interface Props {
  readonly points: readonly ScatterPoint[];
  readonly xLabel: string;
  readonly yLabel: string;
  readonly width?: number;
  readonly height?: number;
  readonly line?: { readonly intercept: number; readonly slope: number } | null;
  readonly identity?: boolean;
  readonly hline?: number | null;
  readonly connect?: boolean;
  readonly testId?: string;
}

export function ScatterChart({ points, xLabel, yLabel, width = 460, height = 280, line, identity, hline, connect, testId }: Props) {
  const m = { l: 58, r: 14, t: 10, b: 42 };
  const ys: (number | null | undefined)[] = points.flatMap((p) => [p.y, p.lower, p.upper]);
  if (hline !== undefined && hline !== null) ys.push(hline);
  const xs = points.map((p) => p.x);
  const x = linearScale(identity ? [...xs, ...points.map((p) => p.y)] : xs, [m.l, width - m.r]);
  const y = linearScale(identity ? [...ys, ...xs] : ys, [height - m.b, m.t]);
  const [x0, x1] = x.domain;
  return (
    <svg className="chart-svg" width={width} height={height} viewBox={`0 0 ${width} ${height}`} role="img" aria-label={`${yLabel} against ${xLabel}`} data-testid={testId}>
      <rect x={m.l} y={m.t} width={width - m.l - m.r} height={height - m.t - m.b} fill="#fbfaf6" stroke="#d8d5cb" />
      {x.ticks.map((t) => (
        <text key={`x${t}`} x={x(t)} y={height - m.b + 14} fontSize={11} textAnchor="middle">
          {formatNumber(t, 2)}
        </text>
      ))}
      {y.ticks.map((t) => (
        <text key={`y${t}`} x={m.l - 4} y={y(t) + 4} fontSize={11} textAnchor="end">
          {formatNumber(t, 2)}
        </text>
      ))}
      <text x={(m.l + width - m.r) / 2} y={height - 6} fontSize={12} textAnchor="middle">
        {xLabel}
      </text>
      <text x={12} y={(m.t + height - m.b) / 2} fontSize={12} textAnchor="middle" transform={`rotate(-90 12 ${(m.t + height - m.b) / 2})`}>
        {yLabel}
      </text>
      {hline !== undefined && hline !== null ? <line x1={m.l} x2={width - m.r} y1={y(hline)} y2={y(hline)} stroke="#6b6b6b" strokeDasharray="4 3" /> : null}
      {identity ? <line x1={x(Math.max(x0, y.domain[0]))} y1={y(Math.max(x0, y.domain[0]))} x2={x(Math.min(x1, y.domain[1]))} y2={y(Math.min(x1, y.domain[1]))} stroke="#6b6b6b" strokeDasharray="4 3" /> : null}
      {line ? <line x1={x(x0)} y1={y(line.intercept + line.slope * x0)} x2={x(x1)} y2={y(line.intercept + line.slope * x1)} stroke="#9c3d12" strokeWidth={2} /> : null}
      {connect && points.length > 1 ? <polyline points={points.map((p) => `${x(p.x)},${y(p.y)}`).join(' ')} fill="none" stroke="#23507a" /> : null}
      {points.map((p, i) => {
        const r = p.size === undefined ? 3.5 : 2 + 9 * Math.sqrt(Math.max(0, p.size));
        return (
          <g key={`${p.label}-${i}`}>
            <title>{`${p.label}: ${formatNumber(p.x, 3)}, ${formatNumber(p.y, 3)}`}</title>
            {p.lower !== undefined && p.lower !== null && p.upper !== undefined && p.upper !== null ? <line x1={x(p.x)} x2={x(p.x)} y1={y(p.lower)} y2={y(p.upper)} stroke="#5b6068" /> : null}
            {p.flagged ? (
              <>
                <polygon points={`${x(p.x)},${y(p.y) - 7} ${x(p.x) - 6},${y(p.y) + 5} ${x(p.x) + 6},${y(p.y) + 5}`} fill="none" stroke="#9c3d12" strokeWidth={2} />
                <text x={x(p.x) + 8} y={y(p.y) - 6} fontSize={10}>
                  {p.label}
                </text>
              </>
            ) : (
              <circle cx={x(p.x)} cy={y(p.y)} r={r} fill="#23507a" fillOpacity={p.size === undefined ? 1 : 0.45} stroke="#23507a" />
            )}
          </g>
        );
      })}
    </svg>
  );
}
