// Bracketed root finding (Brent 1973: bisection safeguarded inverse quadratic
// interpolation). Used where a quantity is monotone in tau² (Paule–Mandel, Q-profile), so
// a bracket always exists once found and convergence is guaranteed.

export interface RootOptions {
  /** Absolute tolerance on x. */
  xTol?: number;
  maxIterations?: number;
}

/** Root of f in [a, b]; f(a) and f(b) must differ in sign (or one be zero). */
export function brentRoot(f: (x: number) => number, a: number, b: number, options: RootOptions = {}): number {
  const xTol = options.xTol ?? 1e-14;
  const maxIterations = options.maxIterations ?? 300;
  let fa = f(a);
  let fb = f(b);
  if (fa === 0) return a;
  if (fb === 0) return b;
  if (Math.sign(fa) === Math.sign(fb)) throw new Error(`brentRoot: no sign change on [${a}, ${b}]`);
  let c = a;
  let fc = fa;
  let d = b - a;
  let e = d;
  for (let i = 0; i < maxIterations; i++) {
    if (Math.sign(fb) === Math.sign(fc)) {
      c = a;
      fc = fa;
      d = b - a;
      e = d;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const tol = 2 * Number.EPSILON * Math.abs(b) + 0.5 * xTol;
    const m = 0.5 * (c - b);
    if (Math.abs(m) <= tol || fb === 0) return b;
    if (Math.abs(e) >= tol && Math.abs(fa) > Math.abs(fb)) {
      const s = fb / fa;
      let p: number;
      let q: number;
      if (a === c) {
        p = 2 * m * s;
        q = 1 - s;
      } else {
        const qa = fa / fc;
        const r = fb / fc;
        p = s * (2 * m * qa * (qa - r) - (b - a) * (r - 1));
        q = (qa - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      else p = -p;
      if (2 * p < Math.min(3 * m * q - Math.abs(tol * q), Math.abs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = m;
        e = m;
      }
    } else {
      d = m;
      e = m;
    }
    a = b;
    fa = fb;
    b += Math.abs(d) > tol ? d : m > 0 ? tol : -tol;
    fb = f(b);
  }
  return b;
}

/**
 * Root of a function decreasing in x on [0, inf) with f(0) > 0: the upper end is
 * doubled until the sign changes. Returns null when no sign change is found below `limit`.
 */
export function decreasingRootFromZero(f: (x: number) => number, start: number, limit = 1e300): number | null {
  let hi = Math.max(start, 1e-8);
  while (f(hi) > 0) {
    hi *= 2;
    if (hi > limit) return null;
  }
  return brentRoot(f, 0, hi, { xTol: 1e-14 * hi });
}
