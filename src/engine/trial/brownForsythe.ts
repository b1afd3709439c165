// Brown & Forsythe (1974, JASA 69:364–367) test of equal variances across treatments: a
// one-way ANOVA of absolute deviations from each group's median. Applied to the model
// residuals grouped by treatment, so block (row, column) effects do not inflate the spread;
// for a completely randomised trial this is exactly the classical test on the observations.
import { fUpper } from '../stats/distributions.js';
import type { FTestRecord } from './types.js';
import { num } from '../jsonSafe.js';

export function brownForsythe(values: ArrayLike<number>, groups: readonly string[]): FTestRecord {
  // Groups in order of first appearance, each group's values in plot order, laid end to end in
  // one buffer: the sums below run in the same order as over per-group lists (same numbers).
  const index = new Map<string, number>();
  const groupOf = new Int32Array(groups.length);
  const sizes: number[] = [];
  for (let i = 0; i < groups.length; i++) {
    let gi = index.get(groups[i]);
    if (gi === undefined) {
      gi = sizes.length;
      index.set(groups[i], gi);
      sizes.push(0);
    }
    groupOf[i] = gi;
    sizes[gi]++;
  }
  const g = sizes.length;
  const n = groups.length;
  if (g < 2 || n - g < 1) return { available: false, reason: 'needs at least two treatments and more plots than treatments', df1: g - 1, df2: n - g, f: null, p: null };
  const starts = new Int32Array(g + 1);
  for (let k = 0; k < g; k++) starts[k + 1] = starts[k] + sizes[k];
  const deviations = new Float64Array(n);
  const fill = starts.slice(0, g);
  for (let i = 0; i < n; i++) deviations[fill[groupOf[i]]++] = values[i];
  for (let k = 0; k < g; k++) {
    const group = deviations.subarray(starts[k], starts[k + 1]);
    const med = median(group);
    for (let j = 0; j < group.length; j++) group[j] = Math.abs(group[j] - med);
  }
  let total = 0;
  for (let i = 0; i < n; i++) total += deviations[i];
  const grand = total / n;
  let between = 0;
  let within = 0;
  for (let k = 0; k < g; k++) {
    const d = deviations.subarray(starts[k], starts[k + 1]);
    let sum = 0;
    for (let j = 0; j < d.length; j++) sum += d[j];
    const m = sum / d.length;
    between += d.length * (m - grand) ** 2;
    for (let j = 0; j < d.length; j++) within += (d[j] - m) ** 2;
  }
  const f = between / (g - 1) / (within / (n - g));
  return { available: true, df1: g - 1, df2: n - g, f: num(f), p: num(fUpper(f, g - 1, n - g)) };
}

function median(v: Float64Array): number {
  const s = v.slice().sort();
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}
