// Must-show of the pooling stage: per-trial estimates pooled from a summary file through
// `manyfield analyze --data` reproduce published worked examples. Published values are
// matched to half a unit of their last printed digit (4 significant digits or better) unless
// stated otherwise; each names its source. The data and the sources' caveats (typed from
// memory, checked as described) are in test/engine/pooling/publishedData.ts.
import { describe, expect, it } from 'vitest';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { manyfield, tempDir } from '../support/cli.js';
import { bcgLogRiskRatios, teacherExpectancyItems } from '../engine/pooling/publishedData.js';
import { tQuantile } from '../../src/engine/stats/distributions.js';

interface Pooled {
  estimate: number; se: number; lower: number; upper: number; tau2: number; tau2Lower: number; tau2Upper: number;
  Q: number; Qdf: number; I2: number; I2FromTau2: number; predictionLower: number; predictionUpper: number; k: number;
}

function near(actual: number, printed: number, decimals: number, units = 0.5): void {
  expect(Math.abs(actual - printed), `${actual} vs printed ${printed}`).toBeLessThanOrEqual(units * 10 ** -decimals + 1e-12);
}

function poolFile(rows: { trial: string; estimate: number; se: number }[], twoStage: object): Pooled {
  const dir = tempDir();
  const data = join(dir, 'summary.csv');
  writeFileSync(data, `trial,estimate,se\n${rows.map((r) => `"${r.trial}",${r.estimate},${r.se}`).join('\n')}\n`);
  const spec = join(dir, 'spec.json');
  writeFileSync(spec, JSON.stringify({ columns: { trial: 'trial', estimate: 'estimate', se: 'se' }, contrasts: [], twoStage }));
  const r = manyfield(['analyze', '--data', data, '--spec', spec, '--json']);
  expect(r.stderr).toBe('');
  expect(r.status).toBe(0);
  const out = JSON.parse(r.stdout) as { twoStage: { pooled: Pooled[] } };
  expect(out.twoStage.pooled).toHaveLength(1);
  return out.twoStage.pooled[0];
}

describe('analyze --data on a summary file', () => {
  it('BCG trials (Viechtbauer 2010, J Stat Softw 36(3), section 3; values recalled from memory): REML tau², estimate, SE, Q, I², Q-profile and the new-site interval', () => {
    const items = bcgLogRiskRatios();
    const p = poolFile(items, { tau2: 'reml', interval: 'wald', prediction: 'plug-in-t' });
    expect(p.k).toBe(13);
    near(p.tau2, 0.3132, 4);
    near(p.estimate, -0.7145, 4);
    near(p.se, 0.1798, 4);
    near(p.lower, -1.0669, 4);
    near(p.upper, -0.3622, 4);
    near(p.Q, 152.233, 4);
    expect(p.Qdf).toBe(12);
    near(100 * p.I2FromTau2, 92.22, 2);
    near(p.tau2Lower, 0.1197, 4);
    near(p.tau2Upper, 1.1115, 4);
    // New-site interval by its published formula (Higgins, Thompson & Spiegelhalter 2009,
    // J R Stat Soc A 172:137-159, eq. 12): mu ± t(k-2) sqrt(tau² + SE²), evaluated at the
    // published tau², estimate and SE; tolerance covers their rounding (~2e-4 here).
    const half = tQuantile(0.975, 11) * Math.sqrt(0.3132 + 0.1798 ** 2);
    near(p.predictionLower, -0.7145 - half, 3);
    near(p.predictionUpper, -0.7145 + half, 3);
  });

  it('BCG trials: the default new-site interval is the bootstrap over the confidence distribution of tau², named in the JSON, the same on every run (fixed seed)', () => {
    const a = poolFile(bcgLogRiskRatios(), { tau2: 'reml' }) as Pooled & { prediction: { method: string; lower: number; upper: number; plugInT: { lower: number } } };
    const b = poolFile(bcgLogRiskRatios(), { tau2: 'reml' }) as typeof a;
    expect(a.prediction.method).toBe('bootstrap-tau2');
    expect(a.predictionLower).toBe(a.prediction.lower);
    expect(b.predictionLower).toBe(a.predictionLower);
    expect(b.predictionUpper).toBe(a.predictionUpper);
    const plain = poolFile(bcgLogRiskRatios(), { tau2: 'reml', prediction: 'plug-in-t' }) as typeof a;
    expect(plain.prediction.method).toBe('plug-in-t');
    expect(a.prediction.plugInT.lower).toBe(plain.predictionLower);
  });

  it('teacher expectancy (Raudenbush 2009, Handbook of Research Synthesis and Meta-Analysis 2nd ed., Table 16.3, p. 309): REML with the Knapp–Hartung (HKSJ) interval', () => {
    // Tolerance one unit of the 3rd decimal: the study SEs are printed to 3 decimals.
    const p = poolFile(teacherExpectancyItems(), { tau2: 'reml', interval: 'hksj' });
    near(p.tau2, 0.019, 3, 1);
    near(p.estimate, 0.084, 3, 1);
    near(p.se, 0.062, 3, 1);
    near(p.lower, -0.046, 3, 1);
    near(p.upper, 0.213, 3, 1);
  });
});
