// One-stage REML with a common residual against R's lme4 1.1-31 (lmer, REML), lmerTest 3.1-3
// (contest: Satterthwaite) and pbkrtest 0.5.2 (Kenward-Roger via lmerTest), on networks drawn
// at random with fixed seeds. lme4 is run with a tightened bobyqa stopping rule (see
// support/lme4Reference.ts) and our criterion must not exceed its default fit's. Tolerances as in issue 4:
//   REML log-likelihood 1e-6 relative; variance components 1e-4 relative; treatment means,
//   contrast estimates and SEs 1e-5 relative; Satterthwaite and Kenward-Roger df 1e-3 relative.
import { describe, expect, it } from 'vitest';
import { fitOneStage } from '../../../src/engine/onestage/fitOneStage.js';
import type { ResolvedContrast } from '../../../src/engine/contrasts/resolve.js';
import { resolveContrast } from '../../../src/engine/contrasts/resolve.js';
import { relDiff, rVector } from '../../support/rscript.js';
import { simulateNetwork } from './support/simulateNetwork.js';
import { contrastCsv, runLme4 } from './support/lme4Reference.js';

function contrastsFor(codes: readonly string[], network: Parameters<typeof fitOneStage>[0]): ResolvedContrast[] {
  const linear: ResolvedContrast = { name: 'linear', kind: 'coefficients', coefficients: Object.fromEntries(codes.map((c, i) => [c, i - (codes.length - 1) / 2])), divisor: 1, meaning: '' };
  const pair: ResolvedContrast = { name: 'T2_vs_T5', kind: 'coefficients', coefficients: Object.fromEntries(codes.map((c) => [c, c === 'T2' ? 1 : c === 'T5' ? -1 : 0])), divisor: 1, meaning: '' };
  return [resolveContrast({ name: 'treated_vs_control', kind: 'treated-vs-control' }, network.treatments, 'CTL'), linear, pair];
}

function rows(contrasts: readonly ResolvedContrast[], codes: readonly string[]): Float64Array[] {
  return contrasts.map((c) => Float64Array.from(codes, (t) => c.coefficients[t] / c.divisor));
}

describe('one-stage REML, common residual, vs lme4 / lmerTest / pbkrtest', () => {
  for (const setting of [
    { seed: 101, trials: 8, missing: 0.06, kr: true },
    { seed: 202, trials: 6, missing: 0.15, kr: true },
    { seed: 303, trials: 40, missing: 0.03, kr: false },
    // no missing plots: all 60 trials share one design, so the fit runs on that pattern's data
    // moments (pivoted-Cholesky pseudo-trials) rather than trial by trial
    { seed: 404, trials: 60, missing: 0, kr: true },
  ]) {
    it(`matches on ${setting.trials} trials (seed ${setting.seed}, ${setting.missing * 100}% plots missing)`, () => {
      const sim = simulateNetwork({ seed: setting.seed, trials: setting.trials, missing: setting.missing });
      const codes = sim.network.treatments.map((t) => t.code);
      const contrasts = contrastsFor(codes, sim.network);
      // after the contrasts, the unit rows of the first two treatments: the means' own df
      const unitRows = [0, 1].map((j) => Float64Array.from(codes, (_, i) => (i === j ? 1 : 0)));
      const r = runLme4(sim.csv, contrastCsv(codes, [...rows(contrasts, codes), ...unitRows]), { kenwardRoger: setting.kr, randTests: true, trialRaw: true });
      const opts = { random: ['trial', 'block', 'treatment-by-trial'] as const, residual: 'common' as const, confidence: 0.95, profile: false };
      const fit = fitOneStage(sim.network, contrasts, { ...opts, random: [...opts.random], df: 'satterthwaite' });
      expect(fit.converged).toBe(true);
      // lme4's REMLcrit is -2 logLik on the same scale (constant (n - p) log 2 pi included)
      expect(relDiff(fit.minusTwoLogLik, r.values.remlcrit)).toBeLessThan(1e-6);
      expect(relDiff(fit.logLik, r.values.loglik)).toBeLessThan(1e-6);
      // never worse than lme4 with its default stopping rule (1e-9 slack for rounding)
      expect(fit.minusTwoLogLik).toBeLessThanOrEqual(r.values.remlcrit_default + 1e-9);
      expect(relDiff(fit.variance.trial!, r.values.v_trial)).toBeLessThan(1e-4);
      expect(relDiff(fit.variance.block!, r.values.v_block)).toBeLessThan(1e-4);
      expect(relDiff(fit.variance['treatment-by-trial']!, r.values.v_tt)).toBeLessThan(1e-4);
      expect(relDiff(fit.variance.residual!, r.values.v_res)).toBeLessThan(1e-4);
      const fixef = rVector(r, 'fixef');
      const fixse = rVector(r, 'fixse');
      fit.means.forEach((m, j) => {
        expect(m.treatment).toBe(codes[j]);
        expect(relDiff(m.estimate, fixef[j])).toBeLessThan(1e-5);
        expect(relDiff(m.se, fixse[j])).toBeLessThan(1e-5);
      });
      // the treatment means' Satterthwaite df (lmerTest contest on a unit row), 1e-3 relative as for contrasts
      [0, 1].forEach((j) => expect(relDiff(fit.means[j].df!, r.values[`sdf${contrasts.length + j + 1}`])).toBeLessThan(1e-3));
      fit.contrasts.forEach((c, i) => {
        expect(relDiff(c.estimate!, r.values[`est${i + 1}`])).toBeLessThan(1e-5);
        expect(relDiff(c.se!, r.values[`se${i + 1}`])).toBeLessThan(1e-5);
        expect(relDiff(c.df!, r.values[`sdf${i + 1}`])).toBeLessThan(1e-3);
      });
      // likelihood-ratio statistics per term, as lmerTest::rand (refit without the term)
      const lrt = rVector(r, 'lrt');
      ['trial', 'block', 'treatment-by-trial'].forEach((name, k) => {
        const comp = fit.varianceComponents.find((v) => v.name === name)!;
        expect(Math.abs(comp.lrt!.statistic - lrt[k])).toBeLessThan(1e-5 * Math.max(1, lrt[k]));
      });
      // each trial's BLUP contrast (fixef + ranef of env:trt) and its own lm() estimate
      fit.trials.forEach((t, e) =>
        t.contrasts.forEach((c, i) => {
          expect(Math.abs(c.blup! - r.values[`blup${i + 1}_${e + 1}`])).toBeLessThan(1e-5 * Math.max(1, Math.abs(c.blup!)));
          const raw = r.values[`raw${i + 1}_${e + 1}`];
          if (raw === undefined) expect(c.raw).toBeNull();
          else {
            expect(Math.abs(c.raw! - raw)).toBeLessThan(1e-9 * Math.max(1, Math.abs(raw)));
            expect(relDiff(c.rawSe!, r.values[`rawse${i + 1}_${e + 1}`])).toBeLessThan(1e-9);
          }
        }),
      );
      if (setting.kr) {
        const kr = fitOneStage(sim.network, contrasts, { ...opts, random: [...opts.random], df: 'kenward-roger', lrt: false });
        kr.contrasts.forEach((c, i) => {
          expect(relDiff(c.df!, r.values[`krdf${i + 1}`])).toBeLessThan(1e-3);
          expect(relDiff(c.se!, r.values[`krse${i + 1}`])).toBeLessThan(1e-5);
        });
        [0, 1].forEach((j) => expect(relDiff(kr.means[j].df!, r.values[`krdf${contrasts.length + j + 1}`])).toBeLessThan(1e-3));
      }
    });
  }
});
