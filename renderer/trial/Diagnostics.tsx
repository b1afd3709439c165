// The residual checks of one trial: residuals against fitted values, normal QQ, Cook's
// distance, residuals along rows and along columns (with the spatial check's verdict).
import { Bar, BarChart, CartesianGrid, Cell, ComposedChart, Line, ReferenceLine, Scatter, ScatterChart, Tooltip, XAxis, YAxis } from 'recharts';
import type { PlotDetail, TrialAnalysis } from '../app/views.js';
import { cooksBars, meansByPosition, normalQuantiles, qqReferenceLine, residualsAgainstFitted, residualsAlong, type ResidualPoint } from '../shape/diagnostics.js';
import { toCsv } from '../shape/csv.js';
import { formatNumber, formatP } from '../shape/format.js';
import { ChartFrame } from '../charts/ChartFrame.js';

const W = 370;
const H = 230;
const MARGIN = { top: 10, right: 14, bottom: 22, left: 4 };
const POINT = '#23507a';
const FLAGGED = '#b3541e';

interface Props {
  readonly plots: readonly PlotDetail[];
  readonly analysis: TrialAnalysis;
  readonly unit: string | null;
  readonly trialLabel: string;
}

/** One direction's trend test in words; a direction the design already absorbs says so. */
function testWords(direction: string, test: TrialAnalysis['diagnostics']['spatial']['rows']): string {
  if (!test) return `${direction} not tested`;
  if (!test.available || test.p === null) return `${direction} not testable: confounded with the design`;
  return `${direction} P ${formatP(test.p)}`;
}

const pointCsv = (xName: string, yName: string) => (points: readonly ResidualPoint[]) =>
  toCsv(
    [
      { header: 'plot', value: (p: ResidualPoint) => p.label },
      { header: 'treatment', value: (p) => p.treatment },
      { header: xName, value: (p) => p.x },
      { header: yName, value: (p) => p.y },
    ],
    points,
  );

export function Diagnostics({ plots, analysis, unit, trialLabel }: Props) {
  const d = analysis.diagnostics;
  const rf = residualsAgainstFitted(plots);
  const qq = normalQuantiles(plots);
  const qqLine = qqReferenceLine(qq);
  const cooks = cooksBars(plots, d.cooksThreshold);
  const alongRows = residualsAlong(plots, 'row');
  const alongCols = residualsAlong(plots, 'col');
  const limit = d.outlierThreshold;
  const u = unit ? ` (${unit})` : '';
  const spatial = d.spatial;
  return (
    <div className="diagnostics" data-testid="diagnostics">
      <p className={`spatial-verdict ${spatial.flagged ? 'flagged' : ''}`} data-testid="spatial-flag">
        {spatial.flagged ? '⚠ Field trend: ' : 'Field trend check: '}
        {spatial.available && spatial.joint
          ? `${spatial.flagged ? 'residuals trend along the field' : 'no trend along rows or columns beyond what the design absorbs'} (${testWords('rows', spatial.rows)}; ${testWords('columns', spatial.cols)}; both together P ${formatP(spatial.joint.p)}).`
          : spatial.reason}
        {' '}Variance homogeneity (Brown–Forsythe): P {formatP(d.brownForsythe.p)}.
      </p>
      <div className="chart-grid">
        <ChartFrame title="Residuals against fitted" exportName={`Residuals against fitted — ${trialLabel}`} csv={() => pointCsv('fitted', 'studentised_residual')(rf)} testId="diag-resid-fitted" note={`Studentised residuals; the dashed lines at ±${limit} mark possible outliers (drawn as triangles).`}>
          <ScatterChart width={W} height={H} margin={MARGIN}>
            <CartesianGrid stroke="#e4e1d8" />
            <XAxis type="number" dataKey="x" name="Fitted" domain={['auto', 'auto']} tick={{ fontSize: 11 }} label={{ value: `Fitted${u}`, position: 'insideBottom', offset: -12, fontSize: 11 }} tickFormatter={(v: number) => formatNumber(v, 1)} />
            <YAxis type="number" dataKey="y" name="Studentised residual" domain={[(m: number) => Math.min(m, -limit - 0.5), (m: number) => Math.max(m, limit + 0.5)]} tick={{ fontSize: 11 }} width={40} tickFormatter={(v: number) => formatNumber(v, 0)} />
            <ReferenceLine y={0} stroke="#6b6b6b" />
            <ReferenceLine y={limit} stroke={FLAGGED} strokeDasharray="4 4" />
            <ReferenceLine y={-limit} stroke={FLAGGED} strokeDasharray="4 4" />
            <Tooltip formatter={(v) => formatNumber(Number(v), 3)} />
            <Scatter data={rf.filter((p) => Math.abs(p.y) <= limit)} fill={POINT} shape="circle" isAnimationActive={false} name="Plot" />
            <Scatter data={rf.filter((p) => Math.abs(p.y) > limit)} fill={FLAGGED} shape="triangle" isAnimationActive={false} name="Possible outlier" />
          </ScatterChart>
        </ChartFrame>
        <ChartFrame title="Normal QQ" exportName={`Normal QQ — ${trialLabel}`} csv={() => pointCsv('normal_score', 'studentised_residual')(qq)} testId="diag-qq" note="Points near the line: residuals look normal. Curves at the ends: heavy tails or skew.">
          <ComposedChart width={W} height={H} margin={MARGIN}>
            <CartesianGrid stroke="#e4e1d8" />
            <XAxis type="number" dataKey="x" domain={['auto', 'auto']} tick={{ fontSize: 11 }} label={{ value: 'Normal score', position: 'insideBottom', offset: -12, fontSize: 11 }} tickFormatter={(v: number) => formatNumber(v, 1)} />
            <YAxis type="number" dataKey="y" domain={['auto', 'auto']} tick={{ fontSize: 11 }} width={40} tickFormatter={(v: number) => formatNumber(v, 1)} />
            {qqLine ? <ReferenceLine segment={qqLine} stroke="#6b6b6b" strokeDasharray="5 4" /> : null}
            <Tooltip formatter={(v) => formatNumber(Number(v), 3)} />
            <Scatter data={qq} fill={POINT} shape="circle" isAnimationActive={false} name="Plot" />
          </ComposedChart>
        </ChartFrame>
        <ChartFrame
          title="Cook's distance" exportName={`Cook's distance — ${trialLabel}`}
          csv={() =>
            toCsv(
              [
                { header: 'plot', value: (b: (typeof cooks)[number]) => b.label },
                { header: 'treatment', value: (b) => b.treatment },
                { header: 'cooks_distance', value: (b) => b.cooks },
                { header: 'above_threshold', value: (b) => b.above },
              ],
              cooks,
            )
          }
          testId="diag-cooks"
          note={`Bars above the dashed line (4/n = ${formatNumber(d.cooksThreshold, 3)}) are influential plots, drawn hatched.`}
        >
          <BarChart width={W} height={H} data={cooks} margin={MARGIN}>
            <defs>
              <pattern id="cooks-hatch" width="5" height="5" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
                <rect width="5" height="5" fill={FLAGGED} />
                <line x1="0" y1="0" x2="0" y2="5" stroke="#fff" strokeWidth="2" />
              </pattern>
            </defs>
            <CartesianGrid stroke="#e4e1d8" vertical={false} />
            <XAxis dataKey="label" tick={{ fontSize: 10 }} interval="preserveStartEnd" label={{ value: 'Plot', position: 'insideBottom', offset: -12, fontSize: 11 }} />
            <YAxis tick={{ fontSize: 11 }} width={40} tickFormatter={(v: number) => formatNumber(v, 2)} />
            {d.cooksThreshold !== null ? <ReferenceLine y={d.cooksThreshold} stroke={FLAGGED} strokeDasharray="4 4" /> : null}
            <Tooltip formatter={(v) => formatNumber(Number(v), 3)} />
            <Bar dataKey="cooks" name="Cook's distance" isAnimationActive={false}>
              {cooks.map((b) => (
                <Cell key={b.plot} fill={b.above ? 'url(#cooks-hatch)' : POINT} />
              ))}
            </Bar>
          </BarChart>
        </ChartFrame>
        <AlongChart title="Residuals along rows" exportName={`Residuals along rows — ${trialLabel}`} testId="diag-rows" points={alongRows} axis="Field row" unit={unit} flagged={spatial.flagged} p={spatial.rows?.p ?? null} />
        <AlongChart title="Residuals along columns" exportName={`Residuals along columns — ${trialLabel}`} testId="diag-cols" points={alongCols} axis="Field column" unit={unit} flagged={spatial.flagged} p={spatial.cols?.p ?? null} />
      </div>
    </div>
  );
}

interface AlongProps {
  readonly title: string;
  readonly exportName: string;
  readonly testId: string;
  readonly points: readonly ResidualPoint[];
  readonly axis: string;
  readonly unit: string | null;
  readonly flagged: boolean;
  readonly p: number | null;
}

function AlongChart({ title, exportName, testId, points, axis, unit, flagged, p }: AlongProps) {
  const means = meansByPosition(points).map((m) => ({ x: m.position, mean: m.mean }));
  const csv = () => pointCsv(axis.toLowerCase().replace(' ', '_'), 'residual')(points);
  return (
    <ChartFrame title={title} exportName={exportName} csv={csv} testId={testId} note={
        points.length === 0
          ? 'Positions are not recorded for this trial.'
          : `Residuals${unit ? ` (${unit})` : ''} of each plot; the line joins their mean at each position${p !== null ? ` (trend P ${formatP(p)}${flagged ? ', flagged' : ''})` : ' (a flat line: the design already takes out this direction)'}.`
      }>
      <ComposedChart width={W} height={H} margin={MARGIN} data={means}>
        <CartesianGrid stroke="#e4e1d8" />
        <XAxis type="number" dataKey="x" domain={['dataMin', 'dataMax']} allowDecimals={false} tick={{ fontSize: 11 }} label={{ value: axis, position: 'insideBottom', offset: -12, fontSize: 11 }} />
        <YAxis type="number" domain={['auto', 'auto']} tick={{ fontSize: 11 }} width={40} tickFormatter={(v: number) => formatNumber(v, 2)} />
        <ReferenceLine y={0} stroke="#6b6b6b" />
        <Tooltip formatter={(v) => formatNumber(Number(v), 3)} />
        <Scatter data={points.map((q) => ({ x: q.x, y: q.y }))} dataKey="y" fill="#5aa9d6" stroke="#23507a" shape="circle" isAnimationActive={false} name="Plot residual" />
        <Line dataKey="mean" stroke={flagged ? FLAGGED : '#23507a'} strokeWidth={2} dot={{ r: 3 }} isAnimationActive={false} name="Mean at position" />
      </ComposedChart>
    </ChartFrame>
  );
}
