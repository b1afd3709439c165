// Adjusted means as points with their confidence intervals; the control is drawn as a square
// and named in the axis, the treated as circles (shape, not colour, tells them apart).
import { CartesianGrid, ComposedChart, ErrorBar, ReferenceLine, Scatter, Tooltip, XAxis, YAxis } from 'recharts';
import type { MeanRow } from '../shape/means.js';
import { toCsv } from '../shape/csv.js';
import { formatNumber } from '../shape/format.js';
import { ChartFrame } from '../charts/ChartFrame.js';
import { CATEGORICAL } from '../shape/palette.js';

interface Props {
  readonly rows: readonly MeanRow[];
  readonly unit: string | null;
  readonly title: string;
  readonly exportName: string;
  readonly missing: readonly string[];
}

export function MeansChart({ rows, unit, title, exportName, missing }: Props) {
  const control = rows.find((r) => r.isControl);
  const data = rows.map((r) => ({ ...r }));
  const csv = () =>
    toCsv(
      [
        { header: 'treatment', value: (r: MeanRow) => r.treatment },
        { header: 'label', value: (r) => r.label },
        { header: 'plots', value: (r) => r.n },
        { header: 'mean', value: (r) => r.estimate },
        { header: 'se', value: (r) => r.se },
        { header: 'lower', value: (r) => r.lower },
        { header: 'upper', value: (r) => r.upper },
      ],
      rows,
    );
  return (
    <ChartFrame
      title={title}
      exportName={exportName}
      csv={csv}
      testId="means-chart"
      note={
        <>
          Points are adjusted means, bars their confidence intervals{control ? '; the control is the square, with a dashed line at its mean' : ''}.
          {missing.length > 0 ? ` Not estimable in this trial: ${missing.join(', ')}.` : ''}
        </>
      }
    >
      <ComposedChart width={440} height={260} data={data} margin={{ top: 10, right: 16, bottom: 8, left: 8 }}>
        <CartesianGrid stroke="#e4e1d8" />
        <XAxis dataKey="treatment" type="category" allowDuplicatedCategory={false} tick={{ fontSize: 12 }} />
        <YAxis type="number" domain={['auto', 'auto']} tick={{ fontSize: 12 }} width={56} label={{ value: unit ?? '', angle: -90, position: 'insideLeft', fontSize: 12 }} />
        {control ? <ReferenceLine y={control.estimate} stroke="#6b6b6b" strokeDasharray="5 4" /> : null}
        <Tooltip formatter={(v) => formatNumber(Number(v), 3)} />
        <Scatter dataKey="estimate" name="Adjusted mean" fill={CATEGORICAL[0]} shape={(p: unknown) => <MeanMarker {...(p as MarkerProps)} />} isAnimationActive={false}>
          <ErrorBar dataKey="error" direction="y" width={8} stroke="#23507a" strokeWidth={1.5} />
        </Scatter>
      </ComposedChart>
    </ChartFrame>
  );
}

interface MarkerProps {
  readonly cx?: number;
  readonly cy?: number;
  readonly payload?: MeanRow;
}

function MeanMarker({ cx = 0, cy = 0, payload }: MarkerProps) {
  if (payload?.isControl) return <rect x={cx - 6} y={cy - 6} width={12} height={12} fill="#d9822b" stroke="#000" strokeWidth={1} />;
  return <circle cx={cx} cy={cy} r={5.5} fill="#23507a" stroke="#fff" strokeWidth={1} />;
}
