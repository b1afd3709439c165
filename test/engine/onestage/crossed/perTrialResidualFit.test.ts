// The per-trial-residual crossed fit's own behaviour (no outside reference needed: the numbers are
// checked against glmmTMB and base R in perTrialResidualR.test.ts): the options it cannot honour
// are replaced with a warning, thin trials are flagged by name, equal residuals reproduce the
// common-residual model's criterion, and the derivatives it searches with are the criterion's.
import { describe, expect, it } from 'vitest';
import { resolveContrast } from '../../../../src/engine/contrasts/resolve.js';
import { crossedData } from '../../../../src/engine/onestage/crossed/crossedData.js';
import { crossedLayout } from '../../../../src/engine/onestage/crossed/crossedLayout.js';
import { evaluateCrossed } from '../../../../src/engine/onestage/crossed/crossedLikelihood.js';
import { fitCrossedPerTrialResidual } from '../../../../src/engine/onestage/crossed/perTrialResidualFit.js';
import { evaluatePerTrial } from '../../../../src/engine/onestage/crossed/perTrialResidualModel.js';
import { perTrialDerivatives } from '../../../../src/engine/onestage/crossed/perTrialResidualDerivatives.js';
import { CROSSED_TERMS } from '../../../../src/engine/onestage/crossed/terms.js';
import { simulateCrossed } from './support/simulateCrossed.js';

const TERMS = [...CROSSED_TERMS];
const sim = simulateCrossed({ seed: 77, sites: 6, years: 3, treatments: 3, blocks: 3, missing: 0.05, residualSpread: 0.4 });
const contrast = resolveContrast({ name: 'T1 vs CTL', coefficients: { T1: 1, CTL: -1 }, divisor: 1 }, sim.network.treatments);

describe('crossed model with a residual per trial', () => {
  it('with all residuals equal, its criterion is the common-residual model\'s at the same variances', () => {
    const d = crossedData(sim.network, TERMS, false);
    const L = crossedLayout(d, TERMS, false);
    const theta = Float64Array.from(L.terms, (_, k) => 0.3 + 0.1 * k);
    const sigma2 = 0.7;
    const common = evaluateCrossed(d, L, theta)!;
    const N = d.nObservations;
    // the common model's criterion is profiled: at sigma2 it is df log(2 pi sigma2) + log|H| + log|X'H^-1X| + r'H^-1r / sigma2
    const atSigma2 = (N - L.p) * Math.log(2 * Math.PI * sigma2) + common.logDetH + common.logDetXHX + common.rHr / sigma2;
    const per = evaluatePerTrial(d, L, Array.from(theta, (t) => sigma2 * t * t), new Float64Array(d.trials.length).fill(sigma2))!;
    expect(Math.abs(per.criterion - atSigma2) / Math.abs(atSigma2)).toBeLessThan(1e-12);
  });
  it('its gradient is the criterion\'s (central differences, 1e-6 relative) and its information operator symmetric', () => {
    const d = crossedData(sim.network, TERMS, false);
    const L = crossedLayout(d, TERMS, false);
    const v = Float64Array.from(L.terms, (_, k) => 0.1 + 0.05 * k);
    const r = Float64Array.from(d.trials, (_, i) => 0.2 + 0.01 * i);
    const der = perTrialDerivatives(d, L, evaluatePerTrial(d, L, v, r)!);
    const n = v.length + r.length;
    const f = (x: Float64Array) => evaluatePerTrial(d, L, x.subarray(0, v.length), x.subarray(v.length))!.criterion;
    const x0 = Float64Array.from([...v, ...r]);
    for (let k = 0; k < n; k++) {
      const h = 1e-5;
      const up = Float64Array.from(x0);
      const down = Float64Array.from(x0);
      up[k] += h;
      down[k] -= h;
      const fd = (f(up) - f(down)) / (2 * h);
      expect(Math.abs(fd - der.gradient[k]) / Math.max(1, Math.abs(fd)), `parameter ${k}`).toBeLessThan(1e-6);
    }
    const e = (k: number) => Float64Array.from({ length: n }, (_, i) => (i === k ? 1 : 0));
    const cols = Array.from({ length: n }, (_, k) => der.apply(e(k)));
    for (let a = 0; a < n; a++) for (let b = 0; b < a; b++) expect(Math.abs(cols[a][b] - cols[b][a])).toBeLessThan(1e-9 * Math.max(1, Math.abs(cols[a][a])));
    der.residualDiagonal.forEach((x, i) => expect(Math.abs(x - cols[v.length + i][v.length + i])).toBeLessThan(1e-9 * Math.abs(x)));
  });
  it('gives Satterthwaite df in place of Kenward–Roger and Wald intervals in place of profiles, each with a warning', () => {
    const fit = fitCrossedPerTrialResidual(sim.network, [contrast], { random: TERMS, yearAsFixed: false, df: 'kenward-roger', confidence: 0.95, lrt: false, profile: true });
    expect(fit.options.df).toBe('satterthwaite');
    expect(fit.contrasts[0].dfMethod).toBe('satterthwaite');
    expect(fit.contrasts[0].df).toBeGreaterThan(1);
    expect(fit.warnings.join('\n')).toMatch(/Kenward–Roger df are not available .* residual per trial: Satterthwaite df are given instead/);
    expect(fit.warnings.join('\n')).toMatch(/profile-likelihood intervals are not yet available with a residual per trial/);
    expect(fit.siteYearView.split.every((s) => s.intervalMethod !== 'profile-likelihood')).toBe(true);
  });
  it('flags trials with fewer than 3 residual df of their own by name', () => {
    const trial = sim.network.trials[0];
    // two blocks, one of them short: plots - (blocks + treatments - 1) = 1
    const plots = trial.plots.filter((p) => p.block === 'B1' || (p.block === 'B2' && p.treatment !== 'T2'));
    const thin = { ...sim.network, trials: [{ ...trial, plots: plots.map((p) => ({ ...p, value: p.value ?? 5 })) }, ...sim.network.trials.slice(1)] };
    const fit = fitCrossedPerTrialResidual(thin, [contrast], { random: TERMS, yearAsFixed: false, df: 'satterthwaite', confidence: 0.95, lrt: false });
    expect(fit.warnings.join('\n')).toContain(`fewer than 3 residual degrees of freedom of their own (${trial.trial})`);
    expect(fit.variance.residualByTrial![trial.trial]).toBeGreaterThan(0);
  });
});
