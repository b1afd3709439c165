// Levenberg–Marquardt on its own, from crude data-driven starts, must reach the same
// least-squares minimum as the profile search (two different routes to one answer), and
// the relative-offset criterion must read ~0 there. Tolerances: 1e-7 relative on
// parameters, relative offset below 1e-7 (the criterion cannot go much lower: the sum of
// squares then changes below rounding).
import { describe, expect, it } from 'vitest';
import { levenbergMarquardt } from '../../../src/engine/rate/levenbergMarquardt.js';
import { EXPONENTIAL_SHAPE, QUADRATIC_PLATEAU_SHAPE, type CurveShape } from '../../../src/engine/rate/separableCurve.js';
import { fitRateModel } from '../../../src/engine/rate/modelChoice.js';
import { treatmentRates, trialRateData } from '../../../src/engine/rate/rateData.js';
import { zeros } from '../../../src/engine/linalg/matrix.js';
import { relDiff } from '../../support/rscript.js';
import { exponentialCurve, generateRateNetwork, quadraticPlateauCurve } from './generateRateNetwork.js';

function lmFromCrudeStart(shape: CurveShape, model: 'exponential' | 'quadratic-plateau', theta0: number, seed: number) {
  const network = generateRateNetwork({ seed, trials: 1, curves: [model === 'exponential' ? exponentialCurve(6, 3, 0.012) : quadraticPlateauCurve(5, 0.04, 150)], sd: 0.25 });
  const d = trialRateData(network.trials[0], treatmentRates(network, 'rate', { timing: 'early' }));
  const n = d.y.length;
  const q = d.offsetCols;
  const evaluate = (p: Float64Array) => {
    const residuals = new Float64Array(n);
    const jacobian = zeros(n, q + 2);
    for (let i = 0; i < n; i++) {
      let fit = p[q] * shape.g(d.rate[i], p[q + 1]);
      for (let j = 0; j < q; j++) {
        fit += d.offsets[i * q + j] * p[j];
        jacobian.data[i * (q + 2) + j] = d.offsets[i * q + j];
      }
      jacobian.data[i * (q + 2) + q] = shape.g(d.rate[i], p[q + 1]);
      jacobian.data[i * (q + 2) + q + 1] = p[q] * shape.dg(d.rate[i], p[q + 1]);
      residuals[i] = d.y[i] - fit;
    }
    return { residuals, jacobian };
  };
  // Crude start: intercept = lowest plot, b = range of the plots (times 2 for the
  // quadratic-plateau's slope scale), blocks 0, θ given.
  const lo = Math.min(...d.y);
  const hi = Math.max(...d.y);
  const start = new Float64Array(q + 2);
  start[0] = lo;
  start[q] = model === 'exponential' ? hi - lo : (2 * (hi - lo)) / theta0;
  start[q + 1] = theta0;
  const lm = levenbergMarquardt({ evaluate }, start, { maxIterations: 500, tolerance: 1e-7, scale: 0 });
  return { lm, profile: fitRateModel(d, model), q };
}

describe('Levenberg–Marquardt from data-driven starts', () => {
  it('exponential: reaches the profiled minimum', () => {
    const { lm, profile, q } = lmFromCrudeStart(EXPONENTIAL_SHAPE, 'exponential', 3 / 200, 21);
    expect(lm.converged).toBe(true);
    expect(lm.relativeOffset).toBeLessThan(1e-7);
    const p = profile.curve?.params ?? {};
    expect(relDiff(lm.params[0], p.intercept)).toBeLessThan(1e-7);
    expect(relDiff(lm.params[q], p.rise)).toBeLessThan(1e-7);
    expect(relDiff(lm.params[q + 1], p.curvature)).toBeLessThan(1e-7);
    expect(relDiff(lm.rss, profile.rss)).toBeLessThan(1e-10);
  });
  it('quadratic-plateau: reaches the profiled minimum from a join guessed at 3/4 of the top rate', () => {
    const { lm, profile, q } = lmFromCrudeStart(QUADRATIC_PLATEAU_SHAPE, 'quadratic-plateau', 150, 22);
    expect(lm.converged).toBe(true);
    const p = profile.curve?.params ?? {};
    expect(relDiff(lm.params[0], p.intercept)).toBeLessThan(1e-7);
    expect(relDiff(lm.params[q], p.linear)).toBeLessThan(1e-7);
    expect(relDiff(lm.params[q + 1], p.join)).toBeLessThan(1e-7);
  });
});
