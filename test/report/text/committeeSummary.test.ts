// Finding 6 of issue 18: the text summary left out what a committee reads first although the
// JSON had it. Reproduced on the demo network with two designed problems — one trial made very
// noisy (a CV above 100%) and one trial without its rainfall value (dropped from the one-stage
// model, which fits a rainfall slope) — and the summary is checked against the report's own
// numbers: every figure asserted below is taken from the JSON, so nothing here is hard-coded.
import { beforeAll, describe, expect, it } from 'vitest';
import { generateDemoNetwork } from '../../../src/demo/generate.js';
import { networkFromTable } from '../../../src/api/analysis/networkFromTable.js';
import { runAnalysis } from '../../../src/api/analysis/runAnalysis.js';
import type { AnyAnalysisReport, TrialStageEntry } from '../../../src/api/analysis/report.js';
import type { NetworkInput } from '../../../src/engine/types.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import { formatAnalysisText } from '../../../src/report/text/formatAnalysisText.js';
import { effectCell, fixed } from '../../../src/report/text/numbers.js';

function untidyDemo(): NetworkInput {
  const demo = networkFromTable(generateDemoNetwork().table, 'yield');
  const [noisy, noRain, ...rest] = demo.trials;
  // every third plot at four times its yield, the others at a twentieth: a CV far above 100%
  const plots = noisy.plots.map((p, i) => (p.value === null ? p : { ...p, value: p.value * (i % 3 === 0 ? 4 : 0.05) }));
  const covariates = Object.fromEntries(Object.entries(noRain.covariates ?? {}).filter(([k]) => k !== 'rainfall'));
  return { ...demo, trials: [{ ...noisy, plots }, { ...noRain, covariates }, ...rest] };
}

const spec = analysisSpecSchema.parse({
  trait: 'yield',
  control: 'CTL',
  contrasts: [
    { name: 'treated_vs_control', kind: 'treated-vs-control' },
    { name: 'rate_linear', trend: 'rate', degree: 1 },
  ],
  pairwise: 'tukey',
  oneStage: { residual: 'common', covariates: ['rainfall'], lrt: false, profile: false },
  moderators: ['rainfall'],
  threshold: 0.3,
  rateResponse: { factor: 'rate', model: 'quadratic', priceRatio: 0.0048, at: { timing: 'early' }, profitableWithin: 0.02 },
});

describe('the text summary carries what a committee reads first (issue 18, finding 6)', () => {
  let report: AnyAnalysisReport;
  let text: string;
  beforeAll(() => {
    const network = untidyDemo();
    report = { ...runAnalysis(network, spec), provenance: { source: 'test', dataFingerprint: 'f'.repeat(64), appVersion: 'test', createdAt: '2026-01-01T00:00:00Z' } };
    text = formatAnalysisText(report);
  });

  it('treatment means with their intervals and the unit', () => {
    const o = report.oneStage!;
    for (const m of o.means) {
      expect(m.lower).not.toBeNull();
      expect(text).toContain(`${m.treatment.padEnd(9)}  ${effectCell(m.estimate, m.lower, m.upper, 't/ha', m.se)}`);
    }
  });

  it("each trial's effect with its interval and CV, and the very noisy trial flagged", () => {
    const trials = report.twoStage.trials as TrialStageEntry[];
    const noisy = trials[0];
    expect(noisy.anova.cv).toBeGreaterThan(100);
    const line = text.split('\n').find((l) => l.startsWith(noisy.trial))!;
    expect(line).toContain(fixed(noisy.anova.cv, 1));
    expect(line).toContain('high CV');
    expect(text).toContain(`${noisy.trial} (${fixed(noisy.anova.cv, 0)}%)`);
    for (const t of trials) {
      const c = t.contrasts.find((x) => x.name === 'treated_vs_control')!;
      const row = text.split('\n').find((l) => l.startsWith(`${t.trial} `) && l.includes(fixed(t.anova.cv, 1)));
      expect(row, t.trial).toBeDefined();
      if (c.estimable) expect(row).toContain(`(${fixed(c.lower, 2)} to ${fixed(c.upper, 2)})`);
    }
  });

  it('the headline per contrast in words and numbers with units, and the probability above the threshold', () => {
    for (const p of report.twoStage.pooled) {
      const unit = report.contrastUnits[p.name]!;
      expect(text).toContain(`Across ${p.k} trials: ${effectCell(p.estimate, p.lower, p.upper, unit, p.se)}`);
      // near the ends the chance is bounded in words, never a rounded 100% or 0%
      const q = p.probAboveThreshold!;
      const chance = q > 0.995 ? 'more than 99\\.5%' : q < 0.005 && q > 0 ? 'less than 0\\.5%' : `${Math.round(100 * q)}%`;
      expect(text).toMatch(new RegExp(`above 0\\.3 ${unit.replace(/\//g, '\\/')}: ${chance}`));
    }
    expect(report.contrastUnits.rate_linear).toBe('t/ha per kg/ha');
  });

  it('the pairwise comparisons that were asked for', () => {
    const pairs = (report.twoStage.trials as TrialStageEntry[])[2].pairwise!.comparisons;
    expect(text).toMatch(/Pairwise comparisons within each trial \(Tukey–Kramer-adjusted/);
    for (const c of pairs) expect(text).toContain(`${c.first} - ${c.second}`);
  });

  it('the meta-regression: the slope, the joint moderator test and the share of tau² explained', () => {
    const m = report.twoStage.pooled[0].metaRegression!;
    expect(text).toContain(`Moderators of treated_vs_control (meta-regression on rainfall, ${m.k} trials)`);
    expect(text).toMatch(/All moderators together: F = /);
    expect(text).toMatch(/Share of the between-trial variance \(tau²\) they explain: /);
    expect(text).toMatch(/Heterogeneity left unexplained: Q /);
  });

  it('every warning once, the dropped trial among them, and the cautions once', () => {
    const dropped = report.oneStage!.warnings.find((w) => /without a value/.test(w))!;
    expect(dropped).toContain(report.twoStage.trials[1].trial);
    expect(text.split(dropped).length - 1).toBe(1);
    for (const w of report.warnings) expect(text.split(w).length - 1).toBe(1);
    expect(report.cautions.length).toBeGreaterThan(0);
    for (const c of report.cautions) expect(text.split(c).length - 1).toBe(1);
    // the rate response's own one-sentence caution says the same again: not printed a second time
    for (const c of report.rateResponse!.cautions) expect(text).not.toContain(c);
    expect(text.match(/^Cautions$/gm)).toHaveLength(1);
  });
});
