// A contrast written on a one-stage model's fixed effects, shared by the per-trial and crossed fits.
import type { ResolvedContrast } from '../contrasts/resolve.js';

/**
 * A contrast as a vector over the model's fixed effects (the first entries are the treatments in
 * `treatments` order; `length` may add more, e.g. year effects): coefficient / divisor. Null when it
 * names a treatment with no usable plot.
 */
export function contrastVector(treatments: readonly string[], c: ResolvedContrast, length = treatments.length): Float64Array | null {
  const l = new Float64Array(length);
  for (const [code, v] of Object.entries(c.coefficients)) {
    if (v === 0) continue;
    const j = treatments.indexOf(code);
    if (j < 0) return null;
    l[j] = v / c.divisor;
  }
  return l;
}
