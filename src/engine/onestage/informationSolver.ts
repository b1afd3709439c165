// Inverse of an information matrix on the free parameters, as the inference needs it: its
// diagonal (standard errors) and quadratic forms g'A^-1 g (Satterthwaite). With one residual per
// trial the matrices are a few hundred square but structured (arrowhead less low rank), so the
// bordered factor (borderedSolve.ts) serves them; small ones are factored densely. Both routes
// report a matrix that is not positive definite on the free parameters as null.
import { borderedFactor, lowRankFactor } from './borderedSolve.js';
import { inverseDiagonal, inverseQuadratic, subCholesky } from './spdSolve.js';
import type { ScoreAndInformation } from './remlDerivatives.js';
import type { SecondOrder } from './secondOrder.js';
import type { ParameterLayout } from './parameters.js';
import type { SymmetricArrowhead } from './arrowhead.js';

/** With more free parameters than this the bordered route is taken. */
export const BORDERED_MIN_FREE = 16;

export interface InverseOnFree {
  /** (A^-1)_jj for each free parameter, in the order of `free`. */
  inverseDiagonal(): Float64Array;
  /** g'A^-1 g for g indexed like `free`. */
  quadratic(g: ArrayLike<number>): number;
}

function structured(delta: SymmetricArrowhead, y: Float64Array | null, q: number, dense: () => Float64Array, nP: number, free: readonly number[], layout: ParameterLayout): InverseOnFree | null {
  if (free.length > BORDERED_MIN_FREE && y) {
    const residual = layout.parameters.map((par) => par.kind === 'residual');
    const b = borderedFactor(delta, y, q, nP, free, residual);
    if (b && 'solve' in b)
      return {
        inverseDiagonal: () => b.inverseDiagonal(),
        quadratic: (g) => {
          const x = b.solve(g);
          let s = 0;
          for (let i = 0; i < x.length; i++) s += g[i] * x[i];
          return s;
        },
      };
    if (b) return null; // not positive definite
  }
  const l = subCholesky(dense(), nP, free);
  return l ? { inverseDiagonal: () => inverseDiagonal(l), quadratic: (g) => inverseQuadratic(l, g) } : null;
}

/** The AI matrix ai = a0 - V C V'. */
export function averageInformationInverse(score: ScoreAndInformation, c: Float64Array, p: number, layout: ParameterLayout, free: readonly number[]): InverseOnFree | null {
  const nP = layout.parameters.length;
  const y = free.length > BORDERED_MIN_FREE ? lowRankFactor(score.v, c, nP, p) : null;
  return structured(score.a0, y, p, () => score.ai, nP, free, layout);
}

/** The observed information O = 2 AI - E = (2 a0 - E_block) - [sqrt2 V L, U][sqrt2 V L, U]'. */
export function observedInformationInverse(score: ScoreAndInformation, so: SecondOrder, c: Float64Array, p: number, layout: ParameterLayout, free: readonly number[]): InverseOnFree | null {
  const nP = layout.parameters.length;
  if (free.length <= BORDERED_MIN_FREE) return structured(score.a0, null, 0, () => so.observed, nP, free, layout);
  const w = lowRankFactor(score.v, c, nP, p);
  if (!w) return structured(score.a0, null, 0, () => so.observed, nP, free, layout);
  const q = p + so.uCols;
  const y = new Float64Array(nP * q);
  for (let k = 0; k < nP; k++) {
    for (let a = 0; a < p; a++) y[k * q + a] = Math.SQRT2 * w[k * p + a];
    for (let a = 0; a < so.uCols; a++) y[k * q + p + a] = so.u[k * so.uCols + a];
  }
  return structured(score.a0.combine(2, so.blockExpected, -1), y, q, () => so.observed, nP, free, layout);
}
