// Pure layout of the rate chart: two panels over one rate axis — the yield gain of each trial's
// curve and of the pooled curve (top), and the pooled net return with the optimum, its interval
// and the profitable range (bottom). Returns paths and positions; the component draws them.
import type { RateData, RatePoint } from '../../../src/report/charts/chartData.js';
import { extent, linearScale, niceTicks } from '../../shape/scales.js';
import { decimalsFor, formatNumber } from '../../shape/format.js';

const LEFT = 58;
const RIGHT = 16;
const TOP = 22;
const GAIN_HEIGHT = 190;
const GAP = 52;
const NET_HEIGHT = 150;
const BOTTOM = 44;

export interface Panel {
  readonly top: number;
  readonly bottom: number;
  readonly yTicks: readonly { readonly y: number; readonly label: string }[];
  readonly zeroY: number | null;
}

export interface RateLayout {
  readonly width: number;
  readonly height: number;
  readonly left: number;
  readonly right: number;
  readonly gain: Panel;
  readonly net: Panel;
  readonly xTicks: readonly { readonly x: number; readonly label: string }[];
  readonly trialPaths: readonly { readonly id: string; readonly label: string; readonly d: string }[];
  readonly pooledPath: string | null;
  readonly netPath: string | null;
  readonly optimum: { readonly x: number; readonly x1: number | null; readonly x2: number | null; readonly label: string } | null;
  readonly profitable: { readonly x1: number; readonly x2: number; readonly label: string } | null;
}

/** An SVG path through the points in order; points with a non-finite value break the line. */
export function linePath(points: readonly RatePoint[], x: (v: number) => number, y: (v: number) => number): string {
  let d = '';
  let pen = false;
  for (const p of points) {
    if (!Number.isFinite(p.rate) || !Number.isFinite(p.value)) {
      pen = false;
      continue;
    }
    d += `${pen ? 'L' : 'M'}${x(p.rate).toFixed(1)},${y(p.value).toFixed(1)}`;
    pen = true;
  }
  return d;
}

function padded(e: { min: number; max: number }): { min: number; max: number } {
  const span = e.max - e.min || Math.abs(e.max) || 1;
  return { min: e.min - span * 0.06, max: e.max + span * 0.06 };
}

function panel(top: number, height: number, values: number[]): { panel: Panel; y: (v: number) => number } {
  const d = padded(extent([0, ...values]) ?? { min: 0, max: 1 });
  const y = linearScale(d.min, d.max, top + height, top);
  const dec = Math.max(0, decimalsFor(d.max - d.min) - 1);
  const yTicks = niceTicks(d.min, d.max, 4).map((v) => ({ y: y(v), label: formatNumber(v, dec) }));
  return { panel: { top, bottom: top + height, yTicks, zeroY: d.min <= 0 && d.max >= 0 ? y(0) : null }, y };
}

export function rateLayout(data: RateData): RateLayout {
  const width = Math.max(360, data.width);
  const allRates = [
    ...data.trials.flatMap((t) => t.points.map((p) => p.rate)),
    ...(data.pooled?.points.map((p) => p.rate) ?? []),
    ...data.netReturn.map((p) => p.rate),
  ];
  const xr = extent([0, ...allRates]) ?? { min: 0, max: 1 };
  const x = linearScale(xr.min, xr.max || 1, LEFT, width - RIGHT);
  const gainValues = [...data.trials.flatMap((t) => t.points.map((p) => p.value)), ...(data.pooled?.points.map((p) => p.value) ?? [])];
  const gain = panel(TOP, GAIN_HEIGHT, gainValues);
  const netTop = TOP + GAIN_HEIGHT + GAP;
  const net = panel(netTop, NET_HEIGHT, data.netReturn.map((p) => p.value));
  const rateDec = Math.max(0, decimalsFor(xr.max - xr.min) - 2);
  const xTicks = niceTicks(xr.min, xr.max, Math.max(3, Math.round((width - LEFT - RIGHT) / 80))).map((v) => ({ x: x(v), label: formatNumber(v, rateDec) }));
  const unit = data.rateUnit ? ` ${data.rateUnit}` : '';
  const fmtRate = (v: number) => `${formatNumber(v, rateDec)}${unit}`;
  const o = data.optimum;
  const optimum =
    o && Number.isFinite(o.rate)
      ? {
          x: x(o.rate),
          x1: o.lower !== null && Number.isFinite(o.lower) ? x(o.lower) : null,
          x2: o.upper !== null && Number.isFinite(o.upper) ? x(o.upper) : null,
          label: `optimum ${fmtRate(o.rate)}${o.lower !== null && o.upper !== null ? ` (${formatNumber(o.lower, rateDec)} to ${formatNumber(o.upper, rateDec)})` : ''}`,
        }
      : null;
  const pr = data.profitable;
  const profitable = pr ? { x1: x(pr.lower), x2: x(pr.upper), label: `near-best rates ${formatNumber(pr.lower, rateDec)} to ${fmtRate(pr.upper)}` } : null;
  return {
    width,
    height: netTop + NET_HEIGHT + BOTTOM,
    left: LEFT,
    right: width - RIGHT,
    gain: gain.panel,
    net: net.panel,
    xTicks,
    trialPaths: data.trials.map((t) => ({ id: t.id, label: t.label, d: linePath(t.points, x, gain.y) })),
    pooledPath: data.pooled ? linePath(data.pooled.points, x, gain.y) : null,
    netPath: data.netReturn.length > 0 ? linePath(data.netReturn, x, net.y) : null,
    optimum,
    profitable,
  };
}
