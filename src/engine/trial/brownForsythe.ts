// Brown & Forsythe (1974, JASA 69:364–367) test of equal variances across treatments: a
// one-way ANOVA of absolute deviations from each group's median. Applied to the model
// residuals grouped by treatment, so block (row, column) effects do not inflate the spread;
// for a completely randomised trial this is exactly the classical test on the observations.
import { fUpper } from '../stats/distributions.js';
import type { FTestRecord } from './types.js';
import { num } from '../jsonSafe.js';

export function brownForsythe(values: ArrayLike<number>, groups: readonly string[]): FTestRecord {
  const byGroup = new Map<string, number[]>();
  for (let i = 0; i < groups.length; i++) {
    const g = byGroup.get(groups[i]) ?? [];
    g.push(values[i]);
    byGroup.set(groups[i], g);
  }
  const g = byGroup.size;
  const n = groups.length;
  if (g < 2 || n - g < 1) return { available: false, reason: 'needs at least two treatments and more plots than treatments', df1: g - 1, df2: n - g, f: null, p: null };
  const deviations = [...byGroup.values()].map((v) => {
    const med = median(v);
    return v.map((x) => Math.abs(x - med));
  });
  const all = deviations.flat();
  const grand = all.reduce((s, v) => s + v, 0) / n;
  let between = 0;
  let within = 0;
  for (const d of deviations) {
    const m = d.reduce((s, v) => s + v, 0) / d.length;
    between += d.length * (m - grand) ** 2;
    for (const v of d) within += (v - m) ** 2;
  }
  const f = between / (g - 1) / (within / (n - g));
  return { available: true, df1: g - 1, df2: n - g, f: num(f), p: num(fUpper(f, g - 1, n - g)) };
}

function median(v: readonly number[]): number {
  const s = [...v].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}
