// The bordered route for information matrices with one residual parameter per trial against a
// dense Cholesky factor of the same matrix: inverse diagonal and quadratic forms to 1e-10
// relative (both exact; they round differently), and the same verdict on definiteness.
import { describe, expect, it } from 'vitest';
import { borderedFactor } from '../../../src/engine/onestage/borderedSolve.js';
import { averageInformationInverse, observedInformationInverse } from '../../../src/engine/onestage/informationSolver.js';
import { inverseDiagonal, inverseQuadratic, subCholesky } from '../../../src/engine/onestage/spdSolve.js';
import { simulateNetwork } from './support/simulateNetwork.js';
import { buildNetworkStatistics } from '../../../src/engine/onestage/sufficientStatistics.js';
import { parameterLayout } from '../../../src/engine/onestage/parameters.js';
import { modelFrame } from '../../../src/engine/onestage/remlCriterion.js';
import { optimiseReml } from '../../../src/engine/onestage/optimise.js';
import { startValues } from '../../../src/engine/onestage/startValues.js';
import { activeParameterTable } from '../../../src/engine/onestage/trialParameters.js';
import { secondOrder } from '../../../src/engine/onestage/secondOrder.js';
import { mulberry32 } from '../../../src/engine/stats/random.js';
import { SymmetricArrowhead } from '../../../src/engine/onestage/arrowhead.js';

function expectRelative(a: ArrayLike<number>, b: ArrayLike<number>, rel: number): void {
  expect(a.length).toBe(b.length);
  for (let i = 0; i < a.length; i++) expect(Math.abs(a[i] - b[i])).toBeLessThanOrEqual(rel * Math.abs(b[i]));
}

describe('bordered factor of an arrowhead matrix less a low-rank one', () => {
  // s shared parameters, n residual ones, rank q: delta = arrowhead, A = delta - Y Y'
  function random(seed: number, s: number, n: number, q: number, shrink: number): { delta: SymmetricArrowhead; y: Float64Array; a: Float64Array; nP: number; residual: boolean[] } {
    const u = mulberry32(seed);
    const nP = s + n;
    const delta = new SymmetricArrowhead(nP, s);
    // a positive definite shared block, positive diagonal, small borders
    for (let i = 0; i < s; i++) for (let j = 0; j <= i; j++) delta.addSymmetric(i, j, i === j ? 4 + u() : 0.3 * (u() - 0.5));
    for (let k = s; k < nP; k++) {
      delta.addSymmetric(k, k, 1 + u());
      for (let i = 0; i < s; i++) delta.addSymmetric(i, k, 0.2 * (u() - 0.5));
    }
    const y = Float64Array.from({ length: nP * q }, () => shrink * (u() - 0.5));
    const a = delta.toDense();
    for (let i = 0; i < nP; i++) for (let j = 0; j < nP; j++) for (let c = 0; c < q; c++) a[i * nP + j] -= y[i * q + c] * y[j * q + c];
    return { delta, y, a, nP, residual: Array.from({ length: nP }, (_, k) => k >= s) };
  }

  it('inverse diagonal and g\'A^-1 g equal the dense route on a subset of free parameters', () => {
    const { delta, y, a, nP, residual } = random(3, 3, 40, 9, 0.25);
    const free = Array.from({ length: nP }, (_, k) => k).filter((k) => k !== 1 && k !== 17);
    const b = borderedFactor(delta, y, 9, nP, free, residual);
    if (!b || !('solve' in b)) throw new Error('expected a factor');
    const l = subCholesky(a, nP, free)!;
    expectRelative(b.inverseDiagonal(), inverseDiagonal(l), 1e-10);
    const g = Float64Array.from(free, (k) => Math.cos(k));
    const x = b.solve(g);
    expect(Math.abs(g.reduce((s, gi, i) => s + gi * x[i], 0) - inverseQuadratic(l, g))).toBeLessThan(1e-10 * inverseQuadratic(l, g));
  });

  it('reports a matrix that is not positive definite as the dense route does', () => {
    const { delta, y, a, nP, residual } = random(4, 3, 30, 6, 3);
    const free = Array.from({ length: nP }, (_, k) => k);
    expect(subCholesky(a, nP, free)).toBeNull();
    expect(borderedFactor(delta, y, 6, nP, free, residual)).toEqual({ notPositiveDefinite: true });
  });
});

describe('information inverses of a per-trial residual fit', () => {
  it('AI and observed information: bordered route equals the dense factor', () => {
    const net = simulateNetwork({ seed: 41, trials: 30, residualSpread: [0.4, 2.5] }).network;
    const stats = buildNetworkStatistics(net, ['trial', 'block', 'treatment-by-trial']);
    const frame = modelFrame(stats, parameterLayout(stats, 'per-trial'));
    const fit = optimiseReml(frame, startValues(frame));
    const nP = frame.layout.parameters.length;
    const p = stats.fixed.length;
    const free = Array.from({ length: nP }, (_, k) => k).filter((k) => !fit.atZero[k]);
    expect(free.length).toBeGreaterThan(16);
    const ev = fit.evaluation;
    const ai = averageInformationInverse(fit.score, ev.c, p, frame.layout, free)!;
    expectRelative(ai.inverseDiagonal(), inverseDiagonal(subCholesky(fit.score.ai, nP, free)!), 1e-9);
    const so = secondOrder(frame, ev, fit.score, activeParameterTable(frame));
    const observed = observedInformationInverse(fit.score, so, ev.c, p, frame.layout, free)!;
    const dense = subCholesky(so.observed, nP, free)!;
    for (const k of [0, 1, 2]) {
      // the gradient of a contrast's variance, as Satterthwaite uses it
      const l = Float64Array.from({ length: p }, (_, j) => (j === 0 ? -1 : j === k + 1 ? 1 : 0));
      const cl = Float64Array.from({ length: p }, (_, i) => l.reduce((s, lj, j) => s + ev.c[i * p + j] * lj, 0));
      const g = free.map((par) => cl.reduce((s, ci, i) => s + ci * cl.reduce((t, cj, j) => t + so.p[par][i * p + j] * cj, 0), 0));
      const want = inverseQuadratic(dense, g);
      expect(Math.abs(observed.quadratic(g) - want)).toBeLessThan(1e-9 * want);
    }
  });
});
