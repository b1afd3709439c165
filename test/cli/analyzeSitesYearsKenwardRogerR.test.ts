// `manyfield analyze --data F --spec S --json` with the crossed one-stage model and
// `oneStage.df: "kenward-roger"`, on an unbalanced network generated here and not used elsewhere
// (13 sites over 4 years with gaps, 6% of plots missing; site, year, trial, block and
// treatment-by-site), checked against R's pbkrtest (vcovAdj, Lb_ddf) on lme4's lmer with the same
// terms on the same file: the Kenward–Roger df of each contrast and each treatment mean to 1e-3
// relative and the adjusted SE (sqrt of l' vcovAdj l) to 1e-6 relative, with lmer evaluated at our
// REML estimates; at lmer's own optimum (which it reaches to about 1e-6 in the variances, never
// lower in REML criterion than ours) the df to 1e-3 and the adjusted SE to 1e-5, as the plain SEs.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { manyfield, tempDir } from '../support/cli.js';
import { relDiff, type RRun } from '../support/rscript.js';
import { simulateCrossed } from '../engine/onestage/crossed/support/simulateCrossed.js';
import { R_GROUP } from '../engine/onestage/crossed/support/lmerCrossed.js';
import { runPbkrtestCrossed } from '../engine/onestage/crossed/support/pbkrtestCrossed.js';

const TERMS = ['site', 'year', 'trial', 'block', 'treatment-by-site'];
interface Row {
  estimate: number;
  se: number;
  df: number;
}
interface Report {
  oneStage: {
    variance: Record<string, number>;
    contrasts: (Row & { dfMethod: string; seUnadjusted: number })[];
    means: (Row & { treatment: string })[];
    warnings: string[];
  };
}
let report: Report;
let r: RRun;

beforeAll(() => {
  const dir = tempDir();
  const sim = simulateCrossed({ seed: 6021, sites: 13, years: 4, runProbability: 0.7, missing: 0.06, sd: { site: 1.0, year: 0.7 } });
  writeFileSync(join(dir, 'net.csv'), sim.csv);
  const spec = {
    trait: 'y',
    columns: { site: 'site', year: 'year', trial: 'env', block: 'block', treatment: 'trt', response: 'y' },
    control: 'CTL',
    contrasts: [{ name: 'T1 vs CTL', coefficients: { T1: 1, CTL: -1 } }, { name: 'T4 vs T2', coefficients: { T4: 1, T2: -1 } }],
    twoStage: null,
    oneStage: { random: TERMS, df: 'kenward-roger', lrt: false, profile: false },
  };
  writeFileSync(join(dir, 'spec.json'), JSON.stringify(spec));
  const run = manyfield(['analyze', '--data', join(dir, 'net.csv'), '--spec', join(dir, 'spec.json'), '--json']);
  if (run.status !== 0) throw new Error(run.stderr);
  report = JSON.parse(run.stdout) as Report;
  const o = report.oneStage;
  const theta = Object.fromEntries(TERMS.map((t) => [R_GROUP[t], Math.sqrt(o.variance[t] / o.variance.residual)]));
  r = runPbkrtestCrossed(sim.csv, ['CTL', 'T1', 'T2', 'T3', 'T4'], [[-1, 1, 0, 0, 0], [0, 0, -1, 0, 1]], TERMS, theta);
}, 900_000);

describe('analyze --data with sites and years crossed and Kenward–Roger df, against pbkrtest on the same file', () => {
  it('gives Kenward–Roger df and adjusted SEs for the contrasts and the means as pbkrtest does', () => {
    const o = report.oneStage;
    expect(o.warnings.filter((w) => /Kenward/.test(w))).toEqual([]);
    const rows: Row[] = [...o.contrasts, ...o.means];
    expect(rows).toHaveLength(7);
    expect(r.values.tremlcrit).toBeLessThanOrEqual(r.values.remlcrit + 1e-8);
    rows.forEach((x, k) => {
      expect(relDiff(x.df, r.values[`tdf${k + 1}`]), `df of row ${k + 1} at our estimates`).toBeLessThan(1e-3);
      expect(relDiff(x.se, r.values[`tse${k + 1}`]), `SE of row ${k + 1} at our estimates`).toBeLessThan(1e-6);
      expect(relDiff(x.df, r.values[`kdf${k + 1}`]), `df of row ${k + 1} at lmer's optimum`).toBeLessThan(1e-3);
      expect(relDiff(x.se, r.values[`kse${k + 1}`]), `SE of row ${k + 1} at lmer's optimum`).toBeLessThan(1e-5);
    });
    for (const c of o.contrasts) {
      expect(c.dfMethod).toBe('kenward-roger');
      expect(c.se).toBeGreaterThan(c.seUnadjusted);
    }
  });
});
