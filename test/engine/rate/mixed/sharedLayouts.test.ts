// The mixed quadratic's REML criterion computes the factor of M_t once per trial layout and sums
// the responses per layout (src/engine/rate/mixed/profiledReml.ts, layoutSums.ts). Reference: the
// same sums built trial by trial from each trial's own pieces (trialPieces), the computation as
// written before layouts were shared. Tolerance: 1e-12 relative at 40 trials (rounding of the
// sums and of the final 3 x 3 solve; the reference writes its own solve); at 4,000 trials the
// trial-by-trial sums themselves round at about 3e-12 relative, so 1e-11 there.
import { describe, expect, it } from 'vitest';
import { mixedQuadraticData } from '../../../../src/engine/rate/mixed/mixedData.js';
import { FIXED, remlSolution, trialPieces } from '../../../../src/engine/rate/mixed/profiledReml.js';
import type { MixedNetworkData } from '../../../../src/engine/rate/mixed/mixedData.js';
import { generateRateNetwork, quadraticCurve } from '../generateRateNetwork.js';
import { fitMixedQuadratic } from '../../../../src/engine/rate/mixed/fitMixedQuadratic.js';

function perTrial(d: MixedNetworkData, theta: Float64Array): { deviance: number; sigma2: number } {
  const xhx = new Float64Array(9);
  const xhy = new Float64Array(3);
  let yhy = 0;
  let logDetH = 0;
  for (const t of d.trials) {
    const p = trialPieces(t, theta);
    const q = t.q;
    for (let i = 0; i < q; i++) logDetH += 2 * Math.log(p.chol[i * q + i]);
    for (let a = 0; a < 3; a++) {
      for (let b = 0; b < 3; b++) {
        let s = 0;
        for (let k = 0; k < q; k++) s += p.cX[k * 3 + a] * p.cX[k * 3 + b];
        xhx[a * 3 + b] += t.xtx[a * 3 + b] - s;
      }
      let s = 0;
      for (let k = 0; k < q; k++) s += p.cX[k * 3 + a] * p.cy[k];
      xhy[a] += t.xty[a] - s;
    }
    let s = 0;
    for (let k = 0; k < q; k++) s += p.cy[k] * p.cy[k];
    yhy += t.yty - s;
  }
  // 3 x 3 Cholesky solve written out (the reference shares no solver with the code under test)
  const l = new Float64Array(9);
  for (let i = 0; i < 3; i++)
    for (let j = 0; j <= i; j++) {
      let s = xhx[i * 3 + j];
      for (let k = 0; k < j; k++) s -= l[i * 3 + k] * l[j * 3 + k];
      l[i * 3 + j] = i === j ? Math.sqrt(s) : s / l[j * 3 + j];
    }
  const z = new Float64Array(3);
  for (let i = 0; i < 3; i++) {
    let s = xhy[i];
    for (let k = 0; k < i; k++) s -= l[i * 3 + k] * z[k];
    z[i] = s / l[i * 3 + i];
  }
  const zz = z[0] * z[0] + z[1] * z[1] + z[2] * z[2];
  const df = d.n - FIXED;
  const sigma2 = (yhy - zz) / df;
  const logDetX = 2 * (Math.log(l[0]) + Math.log(l[4]) + Math.log(l[8]));
  return { deviance: logDetH + logDetX + df * (1 + Math.log(2 * Math.PI * sigma2)), sigma2 };
}

describe('REML criterion with layouts shared between trials', () => {
  // 40 and 4,000 trials, balanced (one layout) and with a plot dropped at random per trial (many layouts)
  const curves = [quadraticCurve(5, 0.03, -0.0001), quadraticCurve(6, 0.02, -0.00006)];
  for (const [trials, dropPlots, tol] of [[40, 0, 1e-12], [40, 1, 1e-12], [4000, 0, 1e-11], [4000, 1, 1e-11]]) {
    it(`equals the trial-by-trial sums (${trials} trials, dropPlots ${dropPlots}), ${tol} relative`, () => {
      const network = generateRateNetwork({ seed: 11 + dropPlots, trials, curves, sd: 0.3, dropPlots });
      const rates = new Map(network.treatments.map((t) => [t.code, Number(t.levels.rate)]));
      const d = mixedQuadraticData(network, rates);
      for (let r = 0; r < 12; r++) {
        const theta = Float64Array.from({ length: 6 + d.grouping.length }, (_, i) => 0.05 + ((r * 5 + i * 3) % 13) / 8);
        const a = remlSolution(d, theta);
        const b = perTrial(d, theta);
        expect(Math.abs(a.deviance - b.deviance)).toBeLessThan(tol * Math.abs(b.deviance));
        expect(Math.abs(a.sigma2 - b.sigma2)).toBeLessThan(tol * b.sigma2);
        // The trial-by-trial path kept in the module agrees with the reference to its rounding.
        const c = remlSolution(d, theta, 'trial');
        expect(Math.abs(c.deviance - b.deviance)).toBeLessThan(tol * Math.abs(b.deviance));
      }
    });
  }
});

describe('mixed quadratic fit with the criterion summed per layout', () => {
  it('reaches the fit of the trial-by-trial criterion (300 trials): fixed effects and G 1e-6, logLik 1e-8 relative', () => {
    // The two criteria differ by rounding only (above), so Nelder–Mead may stop a little
    // differently: the tolerances are those of the optimiser's own stopping rule, not of the sums.
    const curves = [quadraticCurve(5, 0.03, -0.0001), quadraticCurve(6, 0.02, -0.00006)];
    const network = generateRateNetwork({ seed: 5, trials: 300, curves, sd: 0.3, dropPlots: 0 });
    const rates = new Map(network.treatments.map((t) => [t.code, Number(t.levels.rate)]));
    const d = mixedQuadraticData(network, rates);
    const fast = fitMixedQuadratic(d);
    const plain = fitMixedQuadratic(d, { sums: 'trial' });
    expect(fast.converged).toBe(true);
    expect(Math.abs(fast.logLik - plain.logLik)).toBeLessThan(1e-8 * Math.abs(plain.logLik));
    for (let i = 0; i < 3; i++) {
      expect(Math.abs(fast.fixed[i] - plain.fixed[i])).toBeLessThan(1e-6 * Math.abs(plain.fixed[i]));
      expect(Math.abs(fast.randomCovariance[i][i] - plain.randomCovariance[i][i])).toBeLessThan(1e-6 * plain.randomCovariance[i][i]);
    }
    expect(Math.abs(fast.residualVariance - plain.residualVariance)).toBeLessThan(1e-6 * plain.residualVariance);
  });
});
