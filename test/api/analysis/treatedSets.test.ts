// Treated against control, one-stage against two-stage, when a trial lacks a treated treatment:
// the two are still compared, and agreement[].note (with one warning) says that the one-stage
// contrast averages all the network's treated treatments while that trial averages fewer. The
// trials named come from the generator's stated drop (S2-2022 dropped N3).
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runAnalysisFromSource } from '../../../src/api/analysis/fromSource.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import { DROPPED_AMOUNTS, SITE_AMOUNTS_COLUMNS, YEARS, siteAmountsCsv } from '../../support/siteAmountsNetwork.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-treated-sets-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const spec = analysisSpecSchema.parse({
  trait: 'y',
  columns: SITE_AMOUNTS_COLUMNS,
  control: 'N0',
  contrasts: [
    { name: 'treated_vs_control', kind: 'treated-vs-control' },
    { name: 'early_vs_late', factor: 'timing', levels: ['early', 'late'] },
  ],
  oneStage: { lrt: false, profile: false },
});

async function analyse(name: string, text: string) {
  writeFileSync(join(dir, name), text);
  return runAnalysisFromSource({ data: join(dir, name), spec, save: false });
}

describe('treated against control over different treated sets', () => {
  it('is compared with a note naming the trials that averaged fewer treated treatments', async () => {
    const report = await analyse('dropped.csv', siteAmountsCsv(4));
    const trials = Object.values(YEARS).reduce((n, s) => n + s.length, 0);
    const [trial, lacks] = Object.entries(DROPPED_AMOUNTS)[0];
    const a = report.agreement.find((x) => x.name === 'treated_vs_control')!;
    expect(a.agree).not.toBeNull();
    expect(a.differenceInSe).not.toBeNull();
    expect(a.note).toBe(
      `compared, but over different treated sets: the one-stage contrast averages all 4 treated treatments of the network, while 1 of the ${trials} trials that carry it tested fewer and average only those (e.g. ${trial} without ${lacks.join(', ')}); a gap between the two may come from that`,
    );
    expect(report.warnings.filter((w) => w.startsWith('contrast "treated_vs_control": one-stage and two-stage estimates are compared, but over different treated sets'))).toHaveLength(1);
    expect(report.agreement.find((x) => x.name === 'early_vs_late')?.note).toBeUndefined();
  });

  it('gives no note when every trial tested every treated treatment', async () => {
    const [trial] = Object.keys(DROPPED_AMOUNTS);
    const [site, year] = trial.split('-');
    const kept = siteAmountsCsv(4).split('\n').filter((l) => !l.startsWith(`${site},${year},`)).join('\n');
    const report = await analyse('complete.csv', kept);
    expect(report.twoStage.trials.map((t) => t.trial)).not.toContain(trial);
    expect(report.agreement.find((x) => x.name === 'treated_vs_control')?.note).toBeUndefined();
    expect(report.warnings.some((w) => w.includes('different treated sets'))).toBe(false);
  });
});
