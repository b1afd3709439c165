// Pure layout of the forest plot: where every row, the pooled diamond, the prediction interval,
// the zero and break-even lines and the axis ticks go. The component only draws what this returns.
import type { ForestData, ForestRow } from '../../../src/report/charts/chartData.js';
import { extent, linearScale, niceTicks } from '../../shape/scales.js';
import { decimalsFor, formatNumber } from '../../shape/format.js';

export const FOREST_ROW_HEIGHT = 18;
const HEADER = 24;
const SUMMARY_GAP = 8;
const POOLED_HEIGHT = 22;
const PREDICTION_HEIGHT = 20;
const AXIS_HEIGHT = 40;
const MAX_MARKER = 14;
/** The smallest marker side: a trial with almost no weight stays visible (its area is then not to scale). */
export const MIN_MARKER = 2.5;

export interface ForestRowLayout {
  readonly row: ForestRow;
  readonly y: number;
  readonly x1: number;
  readonly x2: number;
  readonly cx: number;
  readonly side: number;
  readonly label: string;
  readonly numbers: string;
  readonly weight: string;
}

export interface ForestLayout {
  readonly width: number;
  readonly height: number;
  readonly plotLeft: number;
  readonly plotRight: number;
  readonly numbersX: number;
  readonly weightX: number;
  readonly headerY: number;
  readonly rowsTop: number;
  readonly rowsBottom: number;
  readonly rows: readonly ForestRowLayout[];
  readonly pooled: { readonly y: number; readonly points: string; readonly numbers: string } | null;
  readonly prediction: { readonly y: number; readonly x1: number; readonly x2: number; readonly numbers: string } | null;
  readonly zeroX: number;
  readonly thresholdX: number | null;
  readonly axisY: number;
  readonly ticks: readonly { readonly x: number; readonly label: string }[];
  readonly decimals: number;
}

/** "1.23 (0.45 to 2.01)" with the given decimals. */
export function intervalText(estimate: number, lower: number, upper: number, decimals: number): string {
  return `${formatNumber(estimate, decimals)} (${formatNumber(lower, decimals)} to ${formatNumber(upper, decimals)})`;
}

/** Marker side so that its AREA is proportional to the weight share (largest share = MAX_MARKER). */
export function markerSide(share: number, maxShare: number): number {
  if (!(maxShare > 0) || !(share > 0)) return MIN_MARKER;
  return Math.max(MIN_MARKER, MAX_MARKER * Math.sqrt(share / maxShare));
}

export function forestDomain(data: ForestData): { min: number; max: number } {
  const values: number[] = [0];
  for (const r of data.rows) values.push(r.lower, r.upper, r.estimate);
  if (data.pooled) values.push(data.pooled.lower, data.pooled.upper);
  if (data.prediction) values.push(data.prediction.lower, data.prediction.upper);
  if (data.threshold !== null && Number.isFinite(data.threshold)) values.push(data.threshold);
  const e = extent(values) ?? { min: -1, max: 1 };
  const span = e.max - e.min || Math.abs(e.max) || 1;
  return { min: e.min - span * 0.04, max: e.max + span * 0.04 };
}

export function forestLayout(data: ForestData): ForestLayout {
  const width = Math.max(320, data.width);
  const labelWidth = Math.min(170, Math.round(width * 0.26));
  const numbersWidth = Math.min(200, Math.round(width * 0.3));
  const weightWidth = 48;
  const plotLeft = labelWidth + 8;
  const plotRight = width - numbersWidth - weightWidth - 8;
  const domain = forestDomain(data);
  const x = linearScale(domain.min, domain.max, plotLeft, plotRight);
  const decimals = data.decimals ?? decimalsFor(domain.max - domain.min);
  const maxShare = Math.max(0, ...data.rows.map((r) => (Number.isFinite(r.weightShare) ? r.weightShare : 0)));
  const rowsTop = HEADER;
  const rows = data.rows.map((row, i): ForestRowLayout => ({
    row,
    y: rowsTop + i * FOREST_ROW_HEIGHT + FOREST_ROW_HEIGHT / 2,
    x1: x(row.lower),
    x2: x(row.upper),
    cx: x(row.estimate),
    side: markerSide(row.weightShare, maxShare),
    label: `${row.site} ${row.year}${row.trial !== `${row.site}-${row.year}` && row.trial !== `${row.site} ${row.year}` ? ` · ${row.trial}` : ''}`,
    numbers: intervalText(row.estimate, row.lower, row.upper, decimals),
    weight: `${formatNumber(row.weightShare * 100, 1)}%`,
  }));
  const rowsBottom = rowsTop + data.rows.length * FOREST_ROW_HEIGHT;
  let cursor = rowsBottom + SUMMARY_GAP;
  let pooled: ForestLayout['pooled'] = null;
  if (data.pooled) {
    const y = cursor + POOLED_HEIGHT / 2;
    const h = 7;
    const p = data.pooled;
    pooled = {
      y,
      points: [`${x(p.lower)},${y}`, `${x(p.estimate)},${y - h}`, `${x(p.upper)},${y}`, `${x(p.estimate)},${y + h}`].join(' '),
      numbers: intervalText(p.estimate, p.lower, p.upper, decimals),
    };
    cursor += POOLED_HEIGHT;
  }
  let prediction: ForestLayout['prediction'] = null;
  if (data.prediction) {
    const y = cursor + PREDICTION_HEIGHT / 2;
    prediction = {
      y,
      x1: x(data.prediction.lower),
      x2: x(data.prediction.upper),
      numbers: `${formatNumber(data.prediction.lower, decimals)} to ${formatNumber(data.prediction.upper, decimals)}`,
    };
    cursor += PREDICTION_HEIGHT;
  }
  const axisY = cursor + 6;
  const ticks = niceTicks(domain.min, domain.max, Math.max(3, Math.round((plotRight - plotLeft) / 70))).map((v) => ({
    x: x(v),
    label: formatNumber(v, decimalsFor(domain.max - domain.min) > 0 ? Math.max(0, decimalsFor(domain.max - domain.min) - 1) : 0),
  }));
  const threshold = data.threshold !== null && Number.isFinite(data.threshold) && data.threshold !== 0 ? x(data.threshold) : null;
  return {
    width,
    height: axisY + AXIS_HEIGHT,
    plotLeft,
    plotRight,
    numbersX: plotRight + 10,
    weightX: width - 4,
    headerY: 15,
    rowsTop,
    rowsBottom,
    rows,
    pooled,
    prediction,
    zeroX: x(0),
    thresholdX: threshold,
    axisY,
    ticks,
    decimals,
  };
}
