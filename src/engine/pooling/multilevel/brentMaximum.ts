// Maximum of a function of one variable on [a, b] by Brent's method (golden-section search
// safeguarding successive parabolic interpolation; Brent 1973, ch. 5). The end points are
// compared explicitly, since the search itself never evaluates them and a variance component
// often has its maximum on the zero boundary.

export interface OneDimMaximum {
  x: number;
  value: number;
  evaluations: number;
}

export function brentMaximum(f: (x: number) => number, a: number, b: number, relTol = 1e-9, maxIterations = 300): OneDimMaximum {
  const golden = 0.5 * (3 - Math.sqrt(5));
  const g = (x: number) => -f(x);
  let evaluations = 0;
  let x = a + golden * (b - a);
  let w = x;
  let v = x;
  let fx = g(x);
  evaluations++;
  let fw = fx;
  let fv = fx;
  let d = 0;
  let e = 0;
  let lo = a;
  let hi = b;
  for (let i = 0; i < maxIterations; i++) {
    const m = 0.5 * (lo + hi);
    const tol = relTol * Math.abs(x) + 1e-300 + relTol * 1e-6 * (b - a);
    const tol2 = 2 * tol;
    if (Math.abs(x - m) <= tol2 - 0.5 * (hi - lo)) break;
    let parabolic = false;
    if (Math.abs(e) > tol) {
      let r = (x - w) * (fx - fv);
      let q = (x - v) * (fx - fw);
      let p = (x - v) * q - (x - w) * r;
      q = 2 * (q - r);
      if (q > 0) p = -p;
      else q = -q;
      r = e;
      e = d;
      if (Math.abs(p) < Math.abs(0.5 * q * r) && p > q * (lo - x) && p < q * (hi - x)) {
        d = p / q;
        const u = x + d;
        if (u - lo < tol2 || hi - u < tol2) d = x < m ? tol : -tol;
        parabolic = true;
      }
    }
    if (!parabolic) {
      e = (x < m ? hi : lo) - x;
      d = golden * e;
    }
    const u = Math.abs(d) >= tol ? x + d : x + (d > 0 ? tol : -tol);
    const fu = g(u);
    evaluations++;
    if (fu <= fx) {
      if (u < x) hi = x;
      else lo = x;
      v = w;
      fv = fw;
      w = x;
      fw = fx;
      x = u;
      fx = fu;
    } else {
      if (u < x) lo = u;
      else hi = u;
      if (fu <= fw || w === x) {
        v = w;
        fv = fw;
        w = u;
        fw = fu;
      } else if (fu <= fv || v === x || v === w) {
        v = u;
        fv = fu;
      }
    }
  }
  let best = { x, value: -fx };
  for (const end of [a, b]) {
    const fe = f(end);
    evaluations++;
    if (fe >= best.value) best = { x: end, value: fe };
  }
  return { ...best, evaluations };
}
