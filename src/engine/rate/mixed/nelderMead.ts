// Derivative-free minimisation (Nelder & Mead 1965, standard coefficients: reflection 1,
// expansion 2, contraction 1/2, shrink 1/2). The mixed-model criterion is smooth but its
// analytic gradient in the Cholesky parameters is long to write; a simplex restarted at
// its own optimum until the restart no longer improves is slow but dependable in the
// handful of dimensions used here.

export interface NelderMeadOptions {
  /** Initial step along each coordinate (absolute). */
  readonly step?: number;
  /** Stop when the simplex's criterion spread is below this times (1 + |best|). */
  readonly fTolerance?: number;
  /** ...and its largest vertex distance from the best is below this. */
  readonly xTolerance?: number;
  readonly maxEvaluations?: number;
}

export interface NelderMeadResult {
  readonly x: Float64Array;
  readonly value: number;
  readonly evaluations: number;
  /** True when the tolerances were met before the evaluation budget ran out. */
  readonly converged: boolean;
}

export function nelderMead(f: (x: Float64Array) => number, start: ArrayLike<number>, o: NelderMeadOptions = {}): NelderMeadResult {
  const n = start.length;
  const step = o.step ?? 0.1;
  const fTol = o.fTolerance ?? 1e-12;
  const xTol = o.xTolerance ?? 1e-8;
  const maxEval = o.maxEvaluations ?? 20000;
  let evaluations = 0;
  const evalf = (x: Float64Array): number => {
    evaluations++;
    const v = f(x);
    return Number.isFinite(v) ? v : Infinity;
  };
  const pts: Float64Array[] = [];
  const vals: number[] = [];
  for (let i = 0; i <= n; i++) {
    const p = Float64Array.from(start);
    if (i > 0) p[i - 1] += step;
    pts.push(p);
    vals.push(evalf(p));
  }
  const order = () => {
    const idx = pts.map((_, i) => i).sort((a, b) => vals[a] - vals[b]);
    const p = idx.map((i) => pts[i]);
    const v = idx.map((i) => vals[i]);
    for (let i = 0; i <= n; i++) {
      pts[i] = p[i];
      vals[i] = v[i];
    }
  };
  const along = (c: Float64Array, w: Float64Array, t: number) => {
    const out = new Float64Array(n);
    for (let j = 0; j < n; j++) out[j] = c[j] + t * (w[j] - c[j]);
    return out;
  };
  let converged = false;
  while (evaluations < maxEval) {
    order();
    let size = 0;
    for (let i = 1; i <= n; i++) for (let j = 0; j < n; j++) size = Math.max(size, Math.abs(pts[i][j] - pts[0][j]));
    // The criterion carries rounding noise of order 1e-13 |f|: a simplex collapsed to a
    // point has met the goal even when that noise keeps its spread above fTol.
    const collapsed = size <= 1e-13 * (1 + Math.abs(pts[0][0]));
    if ((vals[n] - vals[0] <= fTol * (1 + Math.abs(vals[0])) && size <= xTol) || collapsed) {
      converged = true;
      break;
    }
    const centroid = new Float64Array(n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) centroid[j] += pts[i][j] / n;
    const worst = pts[n];
    const xr = along(centroid, worst, -1);
    const fr = evalf(xr);
    if (fr < vals[0]) {
      const xe = along(centroid, worst, -2);
      const fe = evalf(xe);
      if (fe < fr) [pts[n], vals[n]] = [xe, fe];
      else [pts[n], vals[n]] = [xr, fr];
    } else if (fr < vals[n - 1]) {
      [pts[n], vals[n]] = [xr, fr];
    } else {
      // Outside contraction when the reflection beat the worst, inside otherwise.
      const outside = fr < vals[n];
      const xc = along(centroid, worst, outside ? -0.5 : 0.5);
      const fc = evalf(xc);
      if (fc < (outside ? fr : vals[n])) [pts[n], vals[n]] = [xc, fc];
      else {
        for (let i = 1; i <= n; i++) {
          pts[i] = along(pts[0], pts[i], 0.5);
          vals[i] = evalf(pts[i]);
        }
      }
    }
  }
  order();
  return { x: pts[0], value: vals[0], evaluations, converged };
}

/**
 * Nelder–Mead restarted from its own result (a fresh simplex of shrinking size) until a
 * restart improves the criterion by less than `restartTolerance`: guards against the
 * simplex collapsing before the optimum, the method's known weakness.
 */
export function nelderMeadRestarted(
  f: (x: Float64Array) => number,
  start: ArrayLike<number>,
  o: NelderMeadOptions & { readonly maxRestarts?: number; readonly restartTolerance?: number } = {},
): NelderMeadResult & { readonly restarts: number } {
  let best = nelderMead(f, start, o);
  let evaluations = best.evaluations;
  let restarts = 0;
  const maxRestarts = o.maxRestarts ?? 8;
  let step = o.step ?? 0.1;
  let settled = false;
  while (restarts < maxRestarts) {
    step = Math.max(step / 4, 1e-4);
    const next = nelderMead(f, best.x, { ...o, step });
    evaluations += next.evaluations;
    restarts++;
    const gain = best.value - next.value;
    if (next.value <= best.value) best = next;
    if (gain < (o.restartTolerance ?? 1e-9)) {
      settled = true;
      break;
    }
  }
  return { x: best.x, value: best.value, evaluations, converged: best.converged && settled, restarts };
}
