// Delta-method interval for the pooled optimum of quadratic curves. With every trial
// quadratic, the mean net return is b̄ x + c̄ x² - r x, so x* = (r - b̄) / (2 c̄). The
// covariance of (b̄, c̄) is the between-trial sample covariance of the trials' (b, c)
// divided by k (trials as the sampling units, so within-trial error is included). The
// gradient is ∂x*/∂b̄ = -1/(2c̄), ∂x*/∂c̄ = -x*/c̄; the interval uses t on k - 1 df.
import { tQuantile } from '../stats/distributions.js';
import type { Curve } from './curves.js';

export interface DeltaInterval {
  readonly estimate: number;
  readonly se: number;
  readonly df: number;
  readonly lower: number;
  readonly upper: number;
}

export function quadraticDeltaInterval(curves: readonly Curve[], r: number, confidence: number): DeltaInterval | null {
  const k = curves.length;
  if (k < 3 || curves.some((c) => c.model !== 'quadratic')) return null;
  const b = curves.map((c) => c.params.linear);
  const c = curves.map((cv) => cv.params.quadratic);
  const mb = b.reduce((s, v) => s + v, 0) / k;
  const mc = c.reduce((s, v) => s + v, 0) / k;
  if (!(mc < 0)) return null;
  let sbb = 0;
  let scc = 0;
  let sbc = 0;
  for (let i = 0; i < k; i++) {
    sbb += (b[i] - mb) ** 2;
    scc += (c[i] - mc) ** 2;
    sbc += (b[i] - mb) * (c[i] - mc);
  }
  const vbb = sbb / (k - 1) / k;
  const vcc = scc / (k - 1) / k;
  const vbc = sbc / (k - 1) / k;
  const x = (r - mb) / (2 * mc);
  const gb = -1 / (2 * mc);
  const gc = -x / mc;
  const se = Math.sqrt(gb * gb * vbb + 2 * gb * gc * vbc + gc * gc * vcc);
  const t = tQuantile(1 - (1 - confidence) / 2, k - 1);
  return { estimate: x, se, df: k - 1, lower: x - t * se, upper: x + t * se };
}
