// Small numeric helpers for charts: extents, linear maps and readable tick values.

export interface Extent {
  readonly min: number;
  readonly max: number;
}

/** Min and max of the finite values; null when there are none. */
export function extent(values: readonly (number | null | undefined)[]): Extent | null {
  let min = Infinity;
  let max = -Infinity;
  for (const v of values) {
    if (v === null || v === undefined || !Number.isFinite(v)) continue;
    if (v < min) min = v;
    if (v > max) max = v;
  }
  return min === Infinity ? null : { min, max };
}

/** A map from [d0, d1] to [r0, r1]; a zero-width domain maps to the middle of the range. */
export function linearScale(d0: number, d1: number, r0: number, r1: number): (v: number) => number {
  if (d1 === d0) return () => (r0 + r1) / 2;
  const k = (r1 - r0) / (d1 - d0);
  return (v) => r0 + (v - d0) * k;
}

/** Tick values at a 1, 2 or 5 times a power of ten step covering [min, max]. */
export function niceTicks(min: number, max: number, count = 5): number[] {
  if (!Number.isFinite(min) || !Number.isFinite(max)) return [];
  if (min === max) return [min];
  const raw = (max - min) / Math.max(1, count);
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * power).find((s) => s >= raw) ?? 10 * power;
  const first = Math.ceil(min / step - 1e-9) * step;
  const ticks: number[] = [];
  for (let v = first; v <= max + step * 1e-9; v += step) ticks.push(Number(v.toPrecision(12)) + 0);
  return ticks;
}

/** A symmetric extent around zero (for residuals), never zero-width. */
export function symmetricExtent(values: readonly (number | null)[]): Extent {
  const e = extent(values);
  const m = e ? Math.max(Math.abs(e.min), Math.abs(e.max)) : 0;
  return m > 0 ? { min: -m, max: m } : { min: -1, max: 1 };
}
