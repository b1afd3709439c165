// Gauss–Legendre nodes and weights on [-1, 1], computed (not tabulated) by Newton's method
// on the Legendre polynomial P_m with the three-term recurrence. Returns the positive half
// (nodes in decreasing order), the rule being symmetric.
export interface HalfRule {
  readonly nodes: readonly number[];
  readonly weights: readonly number[];
}

export function gaussLegendreHalf(m: number): HalfRule {
  if (m % 2 !== 0) throw new Error('gaussLegendreHalf: even order expected');
  const nodes: number[] = [];
  const weights: number[] = [];
  for (let i = 1; i <= m / 2; i++) {
    let x = Math.cos((Math.PI * (i - 0.25)) / (m + 0.5));
    let derivative = 0;
    for (let iter = 0; iter < 100; iter++) {
      let p0 = 1;
      let p1 = x;
      for (let k = 2; k <= m; k++) {
        const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      derivative = (m * (x * p1 - p0)) / (x * x - 1);
      const step = p1 / derivative;
      x -= step;
      if (Math.abs(step) < 1e-16) break;
    }
    nodes.push(x);
    weights.push(2 / ((1 - x * x) * derivative * derivative));
  }
  return { nodes, weights };
}
