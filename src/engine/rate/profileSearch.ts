// Minimises a profiled residual sum of squares over one nonlinear parameter: the other
// parameters are linear and solved exactly at each trial value (variable projection,
// Golub & Pereyra 1973). A grid finds the global basin, then bisection on the analytic
// derivative of the profile (envelope theorem: dRSS/dθ = -2 Σ r_i ∂f_i/∂θ) pins the
// minimum to machine precision; golden section is the fallback when the derivative does
// not change sign across the bracket.

export interface ProfilePoint {
  readonly rss: number;
  readonly derivative: number;
}

export interface ProfileResult {
  readonly theta: number;
  readonly rss: number;
  /** Which end of the search interval the minimum ran into, if any. */
  readonly atBoundary: 'lower' | 'upper' | null;
  readonly evaluations: number;
  readonly method: string;
}

export function profileMinimum(evaluate: (theta: number) => ProfilePoint, grid: readonly number[]): ProfileResult {
  let evaluations = 0;
  const ev = (t: number): ProfilePoint => {
    evaluations++;
    return evaluate(t);
  };
  const values = grid.map((t) => ev(t).rss);
  let best = 0;
  for (let i = 1; i < values.length; i++) if (values[i] < values[best]) best = i;
  if (best === 0 || best === grid.length - 1) {
    return { theta: grid[best], rss: values[best], atBoundary: best === 0 ? 'lower' : 'upper', evaluations, method: 'grid' };
  }
  let lo = grid[best - 1];
  let hi = grid[best + 1];
  const dLo = ev(lo).derivative;
  const dHi = ev(hi).derivative;
  if (dLo < 0 && dHi > 0) {
    for (let it = 0; it < 200; it++) {
      const mid = 0.5 * (lo + hi);
      if (mid <= lo || mid >= hi) break;
      const d = ev(mid).derivative;
      if (d === 0) {
        lo = hi = mid;
        break;
      }
      if (d < 0) lo = mid;
      else hi = mid;
    }
    const theta = 0.5 * (lo + hi);
    return { theta, rss: ev(theta).rss, atBoundary: null, evaluations, method: 'grid + bisection on the profile derivative' };
  }
  const g = goldenSection((t) => ev(t).rss, lo, hi);
  return { theta: g, rss: ev(g).rss, atBoundary: null, evaluations, method: 'grid + golden section' };
}

/** Minimum of a unimodal function on [a, b] by golden-section search. */
export function goldenSection(f: (x: number) => number, a: number, b: number, relTol = 1e-12): number {
  const phi = (Math.sqrt(5) - 1) / 2;
  let x1 = b - phi * (b - a);
  let x2 = a + phi * (b - a);
  let f1 = f(x1);
  let f2 = f(x2);
  const tol = relTol * Math.max(Math.abs(a), Math.abs(b), 1e-300);
  for (let it = 0; it < 300 && b - a > tol; it++) {
    if (f1 <= f2) {
      b = x2;
      x2 = x1;
      f2 = f1;
      x1 = b - phi * (b - a);
      f1 = f(x1);
    } else {
      a = x1;
      x1 = x2;
      f1 = f2;
      x2 = a + phi * (b - a);
      f2 = f(x2);
    }
  }
  return f1 <= f2 ? x1 : x2;
}
