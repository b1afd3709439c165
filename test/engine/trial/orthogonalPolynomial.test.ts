// Orthogonal polynomial scores on unequal spacing (src/engine/contrasts/orthogonalPolynomial.ts)
// against R's contr.poly(scores =) live (1e-12 absolute) and against integer coefficients
// derived by hand for the levels 0, 1, 2, 4: linear ∝ (-7, -3, 1, 9) (centred levels x 4);
// quadratic ∝ (7, -4, -8, 5) (centred squares minus 9/14 of the linear); cubic ∝ (-3, 8, -6, 1)
// (the solution orthogonal to 1, linear and quadratic). No published table is named: the
// derivation is in this comment and easy to repeat.
import { describe, it, beforeAll, expect } from 'vitest';
import { orthogonalPolynomialScores } from '../../../src/engine/contrasts/orthogonalPolynomial.js';
import { runR, rVector, type RRun } from '../../support/rscript.js';

const sets = [
  [0, 1, 2, 4],
  [0, 40, 80, 160],
  [0, 30, 60, 120, 240],
  [10, 12, 17, 30, 31, 50],
];

describe('orthogonal polynomial scores, unequal spacing', () => {
  let r: RRun;
  beforeAll(() => {
    r = runR(sets.map((x, i) => `emit("s${i}", contr.poly(${x.length}, scores = c(${x.join(',')}))[, 1:min(3, ${x.length - 1})])`).join('\n'));
  });
  it("equal R's contr.poly(scores = x), degrees 1–3 (column-major), to 1e-12", () => {
    sets.forEach((x, i) => {
      const ref = rVector(r, `s${i}`);
      const deg = Math.min(3, x.length - 1);
      const ours = orthogonalPolynomialScores(x, deg);
      for (let d = 0; d < deg; d++) for (let j = 0; j < x.length; j++) expect(Math.abs(ours[d][j] - ref[d * x.length + j]), `set ${i} degree ${d + 1} point ${j}`).toBeLessThan(1e-12);
    });
  });
  it('are proportional to the hand-derived integer coefficients for 0, 1, 2, 4', () => {
    const hand = [[-7, -3, 1, 9], [7, -4, -8, 5], [-3, 8, -6, 1]];
    const ours = orthogonalPolynomialScores([0, 1, 2, 4], 3);
    hand.forEach((h, d) => {
      const norm = Math.sqrt(h.reduce((s, v) => s + v * v, 0));
      h.forEach((v, j) => expect(Math.abs(ours[d][j] - v / norm)).toBeLessThan(1e-12));
    });
  });
});
