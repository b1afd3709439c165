// A random term that is truly absent (its sd set to 0 in the simulation) and whose REML estimate
// lands on the boundary: the fit must report exactly zero, flag it atZero, converge without error,
// and still agree with lme4 1.1-31 / lmerTest 3.1-3 on the same data. Tolerances: logLik 1e-6
// relative; the zero component 1e-6 absolute (lme4 reports 0 or a hair above); others 1e-4
// relative; contrast estimates and SEs 1e-5 relative; Satterthwaite df 1e-3 relative.
import { describe, expect, it } from 'vitest';
import { fitOneStage } from '../../../src/engine/onestage/fitOneStage.js';
import type { ResolvedContrast } from '../../../src/engine/contrasts/resolve.js';
import { relDiff } from '../../support/rscript.js';
import { simulateNetwork } from './support/simulateNetwork.js';
import { contrastCsv, runLme4 } from './support/lme4Reference.js';

describe('one-stage REML: a variance component at zero', () => {
  for (const setting of [
    { seed: 1, zero: 'block' as const, sim: { sdBlock: 0 } },
    { seed: 3, zero: 'block' as const, sim: { sdBlock: 0 } },
  ]) {
    it(`${setting.zero} truly absent (seed ${setting.seed}) is estimated at zero and flagged`, () => {
      const sim = simulateNetwork({ seed: setting.seed, trials: 10, missing: 0.05, ...setting.sim });
      const codes = sim.network.treatments.map((t) => t.code);
      const c: ResolvedContrast = { name: 'T3_vs_CTL', kind: 'coefficients', coefficients: Object.fromEntries(codes.map((k) => [k, k === 'T3' ? 1 : k === 'CTL' ? -1 : 0])), divisor: 1, meaning: '' };
      const fit = fitOneStage(sim.network, [c], { random: ['trial', 'block', 'treatment-by-trial'], residual: 'common', df: 'satterthwaite', confidence: 0.95, profile: false });
      const r = runLme4(sim.csv, contrastCsv(codes, [Float64Array.from(codes, (k) => c.coefficients[k])]), { kenwardRoger: false, randTests: false, trialRaw: false });
      expect(fit.converged).toBe(true);
      expect(fit.warnings).toEqual([]);
      const comp = fit.varianceComponents.find((v) => v.name === setting.zero)!;
      expect(comp.estimate).toBe(0);
      expect(comp.atZero).toBe(true);
      expect(comp.se).toBeNull();
      expect(comp.lrt).toEqual({ statistic: 0, p: 1, reducedLogLik: fit.logLik });
      expect(fit.variance[setting.zero]).toBe(0);
      expect(Math.abs(r.values.v_block)).toBeLessThan(1e-6);
      expect(relDiff(fit.logLik, r.values.loglik)).toBeLessThan(1e-6);
      expect(relDiff(fit.variance.trial!, r.values.v_trial)).toBeLessThan(1e-4);
      expect(relDiff(fit.variance['treatment-by-trial']!, r.values.v_tt)).toBeLessThan(1e-4);
      expect(relDiff(fit.variance.residual!, r.values.v_res)).toBeLessThan(1e-4);
      expect(relDiff(fit.contrasts[0].estimate!, r.values.est1)).toBeLessThan(1e-5);
      expect(relDiff(fit.contrasts[0].se!, r.values.se1)).toBeLessThan(1e-5);
      expect(relDiff(fit.contrasts[0].df!, r.values.sdf1)).toBeLessThan(1e-3);
    });
  }
});
