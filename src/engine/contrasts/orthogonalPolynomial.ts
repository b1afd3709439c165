// Orthogonal polynomial scores on the actual (possibly unequal) spacing of a numeric factor.
// Gram-Schmidt (applied twice for numerical stability) on centred powers of x; each column
// has unit length and a positive leading coefficient, the convention of R's
// contr.poly(scores = x) for distinct x.

/** scores[d-1][i] = value of the degree-d orthogonal polynomial at point i, d = 1..degree. */
export function orthogonalPolynomialScores(x: readonly number[], degree: number): number[][] {
  const n = x.length;
  const mean = x.reduce((s, v) => s + v, 0) / n;
  // Scale to [-1, 1]-ish to keep powers well conditioned.
  const spread = Math.max(...x.map((v) => Math.abs(v - mean))) || 1;
  const u = x.map((v) => (v - mean) / spread);
  const basis: number[][] = [new Array(n).fill(1 / Math.sqrt(n))];
  for (let d = 1; d <= degree; d++) {
    let v = u.map((ui) => ui ** d);
    for (let pass = 0; pass < 2; pass++) {
      for (const b of basis) {
        const proj = dot(v, b);
        v = v.map((vi, i) => vi - proj * b[i]);
      }
    }
    const norm = Math.sqrt(dot(v, v));
    if (!(norm > 1e-10)) throw new Error(`orthogonal polynomial of degree ${d} is not defined: too few distinct levels`);
    basis.push(v.map((vi) => vi / norm));
  }
  return basis.slice(1);
}

function dot(a: readonly number[], b: readonly number[]): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}
