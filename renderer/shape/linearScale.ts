// A linear scale from data to pixels with readable ticks (1, 2, 2.5, 5 × 10^k steps).

export interface LinearScale {
  readonly domain: readonly [number, number];
  readonly range: readonly [number, number];
  (v: number): number;
  readonly ticks: readonly number[];
}

export function niceStep(span: number, count: number): number {
  if (!(span > 0)) return 1;
  const raw = span / Math.max(1, count);
  const mag = 10 ** Math.floor(Math.log10(raw));
  for (const m of [1, 2, 2.5, 5, 10]) if (m * mag >= raw) return m * mag;
  return 10 * mag;
}

/** A scale over every value given (nulls ignored), padded by 4% and widened to whole ticks. */
export function linearScale(values: readonly (number | null | undefined)[], range: readonly [number, number], tickCount = 6): LinearScale {
  const finite = values.filter((v): v is number => typeof v === 'number' && Number.isFinite(v));
  let lo = finite.length ? Math.min(...finite) : 0;
  let hi = finite.length ? Math.max(...finite) : 1;
  if (hi === lo) {
    lo -= 1;
    hi += 1;
  }
  const pad = (hi - lo) * 0.04;
  const step = niceStep(hi - lo + 2 * pad, tickCount);
  const allNonNegative = lo >= 0;
  lo = Math.floor((lo - pad) / step) * step;
  // rates, weights and counts never go below zero: no axis into negative values for them
  if (allNonNegative) lo = Math.max(0, lo);
  hi = Math.ceil((hi + pad) / step) * step;
  const ticks: number[] = [];
  for (let v = lo; v <= hi + step / 2; v += step) ticks.push(Number(v.toPrecision(12)));
  const f = (v: number) => range[0] + ((v - lo) / (hi - lo)) * (range[1] - range[0]);
  return Object.assign(f, { domain: [lo, hi] as const, range, ticks });
}
