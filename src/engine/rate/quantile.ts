// Sample quantile by linear interpolation between order statistics (Hyndman & Fan 1996
// definition 7, the default of R's quantile()).
export function quantileType7(values: readonly number[], p: number): number {
  const v = values.filter((x) => Number.isFinite(x)).sort((a, b) => a - b);
  const n = v.length;
  if (n === 0) return NaN;
  const h = (n - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return v[lo] + (h - lo) * (v[hi] - v[lo]);
}
