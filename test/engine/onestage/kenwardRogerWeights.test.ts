// W = 2 E^-1 through the bordered system (one residual per trial) against the dense inverse of
// the same E: entries and products to 1e-9 relative (both exact; they round differently), and
// the Kenward–Roger df and adjusted variance of a contrast through each (1e-9). The dense route
// itself is checked against pbkrtest in commonResidual.test.ts.
import { describe, expect, it } from 'vitest';
import { simulateNetwork } from './support/simulateNetwork.js';
import { buildNetworkStatistics } from '../../../src/engine/onestage/sufficientStatistics.js';
import { parameterLayout } from '../../../src/engine/onestage/parameters.js';
import { completeEvaluation, modelFrame } from '../../../src/engine/onestage/remlCriterion.js';
import { optimiseReml } from '../../../src/engine/onestage/optimise.js';
import { startValues } from '../../../src/engine/onestage/startValues.js';
import { activeParameterTable } from '../../../src/engine/onestage/trialParameters.js';
import { kenwardRogerU, secondOrder } from '../../../src/engine/onestage/secondOrder.js';
import { borderedWeights, denseWeights } from '../../../src/engine/onestage/kenwardRogerWeights.js';
import { kenwardRogerContrast } from '../../../src/engine/onestage/contrastInference.js';

describe('Kenward–Roger weights with one residual per trial', () => {
  it('bordered W equals the dense inverse; U, df and adjusted variance agree', () => {
    const net = simulateNetwork({ seed: 61, trials: 30, missing: 0.03, residualSpread: [0.5, 2] }).network;
    const stats = buildNetworkStatistics(net, ['trial', 'block', 'treatment-by-trial']);
    const frame = modelFrame(stats, parameterLayout(stats, 'per-trial'));
    const fit = optimiseReml(frame, startValues(frame));
    const active = activeParameterTable(frame);
    const so = secondOrder(frame, fit.evaluation, fit.score, active);
    const nP = frame.layout.parameters.length;
    const index = Array.from({ length: nP }, (_, k) => k);
    const dense = denseWeights(so, index)!;
    const bordered = borderedWeights(so, index, frame.sharedParameters)!;
    expect(bordered).not.toBeNull();
    const rel = (a: number, b: number, scale: number): number => Math.abs(a - b) / Math.max(Math.abs(b), 1e-6 * scale);
    let scale = 0;
    for (let k = 0; k < nP; k++) scale = Math.max(scale, Math.abs(dense.entry(k, k)));
    // the pairs Kenward–Roger asks for: terms with everything, each residual with itself
    for (let k = 0; k < nP; k++)
      for (let l = 0; l < nP; l++) {
        if (k >= frame.sharedParameters && l >= frame.sharedParameters && k !== l) continue;
        expect(rel(bordered.entry(k, l), dense.entry(k, l), scale)).toBeLessThan(1e-9);
      }
    const x = Float64Array.from({ length: nP * 3 }, (_, i) => Math.sin(i + 1));
    const a = bordered.apply(x, 3);
    const b = dense.apply(x, 3);
    let top = 0;
    for (const v of b) top = Math.max(top, Math.abs(v));
    for (let i = 0; i < a.length; i++) expect(Math.abs(a[i] - b[i])).toBeLessThan(1e-9 * top);
    const ev = completeEvaluation(frame, fit.evaluation);
    const uB = kenwardRogerU(frame, ev, so, bordered, active);
    const uD = kenwardRogerU(frame, ev, so, dense, active);
    let uTop = 0;
    for (const v of uD) uTop = Math.max(uTop, Math.abs(v));
    for (let i = 0; i < uB.length; i++) expect(Math.abs(uB[i] - uD[i])).toBeLessThan(1e-9 * uTop);
    const p = stats.fixed.length;
    const l = Float64Array.from({ length: p }, (_, j) => (j === 0 ? -1 : 1 / (p - 1)));
    const rB = kenwardRogerContrast(ev, so, bordered, uB, l);
    const rD = kenwardRogerContrast(ev, so, dense, uD, l);
    expect(Math.abs(rB.df - rD.df)).toBeLessThan(1e-9 * rD.df);
    expect(Math.abs(rB.variance - rD.variance)).toBeLessThan(1e-9 * rD.variance);
  });
});
