// The demo network: deterministic for its seed, the promised shape and quirks, and simple
// per-trial means recover the stored true values within their sampling error.
import { describe, expect, it } from 'vitest';
import { generateDemoNetwork } from '../../src/demo/generate.js';
import { chisqQuantile } from '../../src/engine/stats/distributions.js';

describe('demo network', () => {
  const a = generateDemoNetwork();

  it('is the same every time for its seed, and different for another seed', () => {
    const b = generateDemoNetwork();
    expect(b.table.sha256).toBe(a.table.sha256);
    expect(JSON.stringify(b.truth)).toBe(JSON.stringify(a.truth));
    expect(generateDemoNetwork(1).table.sha256).not.toBe(a.table.sha256);
  });

  it('has at least 12 sites x 3 years, mixed designs and the augmented-factorial protocol', () => {
    const t = a.table;
    expect(t.trials.length).toBeGreaterThanOrEqual(36);
    expect(new Set(t.trials.map((x) => x.site)).size).toBeGreaterThanOrEqual(12);
    expect(new Set(t.trials.map((x) => x.year)).size).toBeGreaterThanOrEqual(3);
    const designs = t.trials.map((x) => x.design);
    expect(designs.filter((d) => d === 'completely-randomised')).toHaveLength(1);
    expect(designs.filter((d) => d === 'row-column').length).toBeGreaterThanOrEqual(3);
    expect(designs.filter((d) => d === 'randomised-blocks').length).toBeGreaterThan(designs.length / 2);
    const rates = [...new Set(t.treatments.map((x) => x.levels.rate))].filter((r) => r !== 0).sort((x, y) => Number(x) - Number(y));
    expect(rates).toEqual([40, 80, 160]); // unequally spaced
    expect(t.treatments.find((x) => x.code === 'CTL')!.levels.timing).toBeNull();
    expect(t.traits.map((x) => x.name)).toEqual(['yield', 'protein']);
    for (const trial of t.trials) expect(Object.keys(t.trialCovariates[trial.key])).toEqual(['rainfall']);
  });

  it('carries the stated quirks', () => {
    const { quirks } = a.truth;
    const plotsOf = (trial: string) => a.table.plots.filter((p) => p.trialKey === trial);
    expect(plotsOf(quirks.missingTreatment.trial).some((p) => p.treatment === quirks.missingTreatment.treatment)).toBe(false);
    const missingValues = a.table.observations.filter((o) => o.trait === 'yield' && o.value === null);
    expect(missingValues).toHaveLength(quirks.missingPlots.length);
    const sigmas = a.truth.trials.map((t) => t.sigma);
    expect(Math.max(...sigmas) / Math.min(...sigmas)).toBeGreaterThan(2); // heterogeneous error variances
  });

  it('simple per-trial treatment means recover the true values within sampling error', () => {
    // For each trial x treatment, z = (observed mean - true mean) / (sigma / sqrt(n)) is N(0,1)
    // under the stated model. Check every |z| < 4.5 (chance of a false failure ~ 300 x 7e-6)
    // and the sum of z^2 inside the central 99.9% of its chi-square distribution.
    const yieldByPlot = new Map<number, number | null>();
    a.table.observations.forEach((o) => o.trait === 'yield' && yieldByPlot.set(o.plot, o.value));
    const { outlier } = a.truth.quirks;
    let sumZ2 = 0;
    let count = 0;
    for (const truth of a.truth.trials) {
      for (const [code, expected] of Object.entries(truth.expectedYield)) {
        const values: number[] = [];
        a.table.plots.forEach((p, i) => {
          if (p.trialKey !== truth.trial || p.treatment !== code) return;
          if (truth.trial === outlier.trial && code === outlier.treatment && p.block === outlier.block) return;
          const v = yieldByPlot.get(i);
          if (v !== null && v !== undefined) values.push(v);
        });
        const mean = values.reduce((s, v) => s + v, 0) / values.length;
        // Values are stored rounded to 0.001: negligible against sigma / 2 >= 0.1.
        const z = (mean - expected) / (truth.sigma / Math.sqrt(values.length));
        expect(Math.abs(z)).toBeLessThan(4.5);
        sumZ2 += z * z;
        count++;
      }
    }
    expect(sumZ2).toBeGreaterThan(chisqQuantile(0.0005, count));
    expect(sumZ2).toBeLessThan(chisqQuantile(0.9995, count));
  });
});
