// The spectral route (trials of one layout with their own residual variances, evaluated through
// one eigen-decomposition per layout) against the pattern route, which forms every trial's
// block by Cholesky: both are exact algebra, so they must agree to rounding (a slip in a formula
// shows as an error of order one). Tolerances, entry by entry: 1e-10 relative (1e-9 for the AI
// blocks, whose residual entries cancel); sums whose parts cancel (v, P_k, gradient, observed
// information) are held to the size of their parts.
import { describe, expect, it } from 'vitest';
import { simulateNetwork, type SimulationSettings } from './support/simulateNetwork.js';
import { buildNetworkStatistics } from '../../../src/engine/onestage/sufficientStatistics.js';
import { parameterLayout } from '../../../src/engine/onestage/parameters.js';
import { evaluateReml, modelFrame } from '../../../src/engine/onestage/remlCriterion.js';
import { startValues } from '../../../src/engine/onestage/startValues.js';
import { scoreAndInformation } from '../../../src/engine/onestage/remlDerivatives.js';
import { activeParameterTable } from '../../../src/engine/onestage/trialParameters.js';
import { secondOrder } from '../../../src/engine/onestage/secondOrder.js';
import { optimiseReml } from '../../../src/engine/onestage/optimise.js';
import { trialContrasts } from '../../../src/engine/onestage/trialContrasts.js';
import { symmetricEigenInPlace } from '../../../src/engine/linalg/symmetricEigen.js';
import type { NetworkInput } from '../../../src/engine/types.js';
import { mulberry32 } from '../../../src/engine/stats/random.js';
import type { RandomTerm } from '../../../src/engine/onestage/types.js';

/**
 * Entry by entry: within rel of the entry itself, or of 1e-6 of `scale` (by default the largest
 * entry) for entries near zero.
 */
function close(a: ArrayLike<number>, b: ArrayLike<number>, rel = 1e-10, scale = largest(a, b)): void {
  expect(a.length).toBe(b.length);
  let worst = 0;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) worst = Math.max(worst, Math.abs(a[i] - b[i]) / Math.max(Math.abs(b[i]), 1e-6 * scale));
  expect(worst).toBeLessThanOrEqual(rel);
}

/** a - b for a difference x - y of two computed parts: within rel of |x| + |y|, entry by entry. */
function differenceClose(a: ArrayLike<number>, b: ArrayLike<number>, x: ArrayLike<number>, y: ArrayLike<number>, rel = 1e-10): void {
  let worst = 0;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) worst = Math.max(worst, Math.abs(a[i] - b[i]) / (Math.abs(x[i]) + Math.abs(y[i])));
  expect(worst).toBeLessThanOrEqual(rel);
}

function largest(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let scale = 0;
  for (let i = 0; i < a.length; i++) scale = Math.max(scale, Math.abs(a[i]), Math.abs(b[i]));
  return scale;
}

/** Every other trial loses the same two plots, so two unbalanced layouts are shared by many trials. */
function withSharedHoles(net: NetworkInput): NetworkInput {
  return {
    ...net,
    trials: net.trials.map((t, i) =>
      i % 2 === 0 ? t : { ...t, plots: t.plots.filter((pl) => !((pl.block === t.plots[0].block && pl.treatment === 'T3') || (pl.block === t.plots[t.plots.length - 1].block && pl.treatment === 'CTL'))) },
    ),
  };
}

function compare(net: NetworkInput, random: readonly RandomTerm[], theta?: (start: Float64Array) => Float64Array, covariates: readonly string[] = []): { groups: number } {
  const stats = buildNetworkStatistics(net, random, covariates);
  const frame = modelFrame(stats, parameterLayout(stats, 'per-trial'));
  const start = startValues(frame);
  const th = theta ? theta(start) : start;
  const fast = evaluateReml(frame, th);
  const full = evaluateReml(frame, th, true);
  expect(fast.spectral).not.toBeNull();
  expect(full.spectral).toBeNull();
  expect(Math.abs(fast.criterion - full.criterion)).toBeLessThan(1e-11 * Math.abs(full.criterion));
  // a covariate's slope can be small beside the means: fixed effects held to the largest of them
  close(fast.beta, full.beta, 1e-10, 1e6 * largest(fast.beta, full.beta));
  close(fast.c, full.c, 1e-10, 1e6 * largest(fast.c, full.c));
  const active = activeParameterTable(frame);
  for (const withInformation of [false, true]) {
    const a = scoreAndInformation(frame, fast, active, withInformation);
    const b = scoreAndInformation(frame, full, active, withInformation);
    close(a.trace, b.trace);
    close(a.quadratic, b.quadratic);
    // the gradient is their difference, which cancels near the optimum: held to the parts' size
    differenceClose(a.gradient, b.gradient, b.trace, b.quadratic);
    // v = X'V^-1 V_k V^-1 r and P_k below are sums of parts that cancel (r is a residual; H2 =
    // K / s^2 less a correction), so they are held to the size of the whole array (1e-9: a
    // covariate's Gram entries are 1e5 times a treatment's here)
    close(a.v, b.v, 1e-9, 1e6 * largest(a.v, b.v));
    close(a.a0.toDense(), b.a0.toDense(), 1e-9);
    if (withInformation) {
      close(a.ai, b.ai, 1e-9);
      // each residual's own expected information (the Newton step's correction), by both routes
      close(a.residualExpected, b.residualExpected, 1e-9);
      expect(b.residualExpected.filter((e) => e > 0).length).toBe(frame.layout.parameters.length - frame.sharedParameters);
    }
  }
  return { groups: frame.spectral.length };
}

describe('spectral route for trials sharing a layout, each with its own residual', () => {
  const base: SimulationSettings = { seed: 11, trials: 24, residualSpread: [0.4, 2.5] };
  it('balanced trials: one group; criterion, fixed effects, score and AI match the pattern route', () => {
    expect(compare(simulateNetwork(base).network, ['trial', 'block', 'treatment-by-trial']).groups).toBe(1);
  });
  it('two shared unbalanced layouts', () => {
    expect(compare(withSharedHoles(simulateNetwork({ ...base, seed: 12 }).network), ['trial', 'block', 'treatment-by-trial']).groups).toBe(2);
  });
  it('away from the start values, with one term at zero and another tiny', () => {
    const net = simulateNetwork({ ...base, seed: 13 }).network;
    compare(net, ['trial', 'block', 'treatment-by-trial'], (s) => Float64Array.from(s, (v, k) => (k === 1 ? 0 : k === 2 ? 1e-9 : v * (1 + 0.3 * Math.sin(k)))));
  });
  it('a fixed trial covariate with few distinct values: trials sharing a value share a layout', () => {
    const sim = simulateNetwork({ ...base, seed: 15 }).network;
    const net = { ...sim, trials: sim.trials.map((t, i) => ({ ...t, covariates: { rain: [310, 450, 520][i % 3] } })) };
    expect(compare(net, ['trial', 'block', 'treatment-by-trial'], undefined, ['rain']).groups).toBe(3);
  });
  it('other choices of random terms', () => {
    const net = withSharedHoles(simulateNetwork({ ...base, seed: 14, blocks: 3, treatments: 5 }).network);
    compare(net, ['block']);
    compare(net, ['treatment-by-trial']);
    compare(net, ['trial', 'treatment-by-trial']);
  });
});

describe('symmetric eigen-decomposition', () => {
  it('reconstructs a rank-deficient matrix with orthonormal vectors (1e-13 of its norm)', () => {
    const n = 9;
    const uniform = mulberry32(5);
    const b = Array.from({ length: n * 4 }, () => uniform() - 0.5);
    const a = new Float64Array(n * n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) for (let k = 0; k < 4; k++) a[i * n + j] += b[i * 4 + k] * b[j * 4 + k];
    const copy = Float64Array.from(a);
    const values = new Float64Array(n);
    const q = new Float64Array(n * n);
    symmetricEigenInPlace(copy, n, values, q);
    const norm = Math.sqrt(a.reduce((s, x) => s + x * x, 0));
    for (let i = 0; i < n; i++)
      for (let j = 0; j < n; j++) {
        let rec = 0;
        let dot = 0;
        for (let k = 0; k < n; k++) {
          rec += q[i * n + k] * values[k] * q[j * n + k];
          dot += q[k * n + i] * q[k * n + j];
        }
        expect(Math.abs(rec - a[i * n + j])).toBeLessThan(1e-13 * norm);
        expect(Math.abs(dot - (i === j ? 1 : 0))).toBeLessThan(1e-13);
      }
    // rank 4: five eigenvalues at zero
    expect(Array.from(values).filter((v) => Math.abs(v) < 1e-12 * norm).length).toBe(5);
  });
});

describe('second-order terms through the spectral route', () => {
  it('P_k, expected and observed information match the pattern route', () => {
    // the third network has no block variance: its layouts lose eigen-directions
    for (const [seed, holes, sdBlock] of [[21, false, 1], [22, true, 1], [23, true, 0]] as const) {
      const sim = simulateNetwork({ seed, trials: 20, residualSpread: [0.4, 2.5], sdBlock }).network;
      const stats = buildNetworkStatistics(holes ? withSharedHoles(sim) : sim, ['trial', 'block', 'treatment-by-trial']);
      const frame = modelFrame(stats, parameterLayout(stats, 'per-trial'));
      const start = startValues(frame);
      const th = sdBlock === 0 ? Float64Array.from(start, (v, k) => (k === 1 ? 0 : v)) : start;
      const active = activeParameterTable(frame);
      const fast = evaluateReml(frame, th);
      const full = evaluateReml(frame, th, true);
      const scoreB = scoreAndInformation(frame, full, active);
      const a = secondOrder(frame, fast, scoreAndInformation(frame, fast, active), active);
      const b = secondOrder(frame, full, scoreB, active);
      a.p.forEach((pk, k) => close(pk, b.p[k], 1e-10, 1e6 * largest(pk, b.p[k])));
      // E_kl = tr(V^-1 V_k V^-1 V_l) - 2 tr(C Q_kl) + ...: parts up to ~100x the entry cancel
      close(a.expected, b.expected, 1e-8);
      differenceClose(a.observed, b.observed, Float64Array.from(b.expected, (_, j) => 2 * scoreB.ai[j]), b.expected, 1e-8);
    }
  });
});

describe('per-trial contrasts through the spectral route', () => {
  it('BLUPs and raw estimates match the pattern route (1e-10), absent treatments included', () => {
    const sim = withSharedHoles(simulateNetwork({ seed: 31, trials: 16, residualSpread: [0.4, 2.5] }).network);
    // two trials laid out alike without T2 at all: their contrasts involving T2 are not estimable
    const net = { ...sim, trials: sim.trials.map((t, i) => (i === 3 || i === 5 ? { ...t, plots: t.plots.filter((pl) => pl.treatment !== 'T2') } : t)) };
    const stats = buildNetworkStatistics(net, ['trial', 'block', 'treatment-by-trial']);
    const frame = modelFrame(stats, parameterLayout(stats, 'per-trial'));
    expect(frame.spectral.some((g) => g.trials.includes(3) && g.trials.includes(5))).toBe(true);
    const th = startValues(frame);
    const p = stats.fixed.length;
    const vectors = [
      { name: 'first', l: Float64Array.from({ length: p }, (_, j) => (j === 0 ? -1 : j === 2 ? 1 : 0)) },
      { name: 'all', l: Float64Array.from({ length: p }, (_, j) => (j === 0 ? -1 : 1 / (p - 1))) },
    ];
    const a = trialContrasts(frame, evaluateReml(frame, th), vectors, 0.3);
    const b = trialContrasts(frame, evaluateReml(frame, th, true), vectors, 0.3);
    expect(a).toHaveLength(b.length);
    let notEstimable = 0;
    a.forEach((row, i) =>
      row.contrasts.forEach((c, ci) => {
        const d = b[i].contrasts[ci];
        expect(c.blup).not.toBeNull();
        expect(Math.abs(c.blup! - d.blup!)).toBeLessThan(1e-10 * Math.max(1, Math.abs(d.blup!)));
        expect(c.raw).toBe(d.raw);
        if (d.raw === null) notEstimable++;
      }),
    );
    expect(notEstimable).toBeGreaterThan(0);
  });
});

describe('AI-REML with one residual per trial on a larger network', () => {
  it('converges to a stationary point without step-halving (residual diagonal at its observed curvature)', () => {
    const net = simulateNetwork({ seed: 1077, trials: 1000, residualSpread: [0.5, 2] }).network;
    const stats = buildNetworkStatistics(net, ['trial', 'block', 'treatment-by-trial']);
    const frame = modelFrame(stats, parameterLayout(stats, 'per-trial'));
    const fit = optimiseReml(frame, startValues(frame));
    expect(fit.run.outcome).toBe('converged');
    expect(fit.run.stepHalvings).toBe(0);
    // plain AI steps (and no rounding slack) took 12 iterations and 7 halvings here; now 8
    expect(fit.run.iterations).toBeLessThanOrEqual(9);
    // stationary: every free parameter's score is zero to 1e-6 of its parts
    const sc = fit.score;
    for (let k = 0; k < sc.gradient.length; k++) if (!fit.atZero[k]) expect(Math.abs(sc.gradient[k])).toBeLessThan(1e-6 * (Math.abs(sc.trace[k]) + Math.abs(sc.quadratic[k])));
  });
});
