// The network checks beside the trial list (`trials.checks`): on a workspace imported from a
// network coded by level number with site-specific amounts, plus one treatment tested at a single
// trial and one trial that shares no treatment with the rest. Expected values come from the
// generator's stated amounts and drops (test/support/siteAmountsNetwork.ts), not from our output.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { api } from '../../../src/api/handlers.js';
import { DROPPED_AMOUNTS, SITE_AMOUNTS, SITE_AMOUNTS_COLUMNS, YEARS, siteAmountsCsv } from '../../support/siteAmountsNetwork.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-network-checks-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Extra rows: N4 at S1-2021 only; trial S9-2022 tests only its own codes Z0, Z1. */
function extraRows(): string {
  const rows: string[] = [];
  for (let block = 1; block <= 4; block++) {
    rows.push(`S1,2021,${block},${block * 100 + 9},N4,200,early,${(8 + 0.1 * block).toFixed(3)}`);
    rows.push(`S9,2022,${block},${block * 100 + 1},Z0,0,,${(5 + 0.1 * block).toFixed(3)}`);
    rows.push(`S9,2022,${block},${block * 100 + 2},Z1,70,early,${(6 + 0.1 * block).toFixed(3)}`);
  }
  return `${rows.join('\n')}\n`;
}

describe('trials.checks', () => {
  it('lists single-trial treatments, disconnected trials and each trial\'s rate range at the amounts applied there', async () => {
    const file = join(dir, 'net.csv');
    writeFileSync(file, siteAmountsCsv(3) + extraRows());
    const workspace = join(dir, 'w.manyfield');
    const imported = await api['data.import']({ workspace, file, mapping: { columns: SITE_AMOUNTS_COLUMNS, trait: { name: 'y', unit: 't/ha' }, control: 'N0', factorUnits: { rate: 'kg/ha' } } });
    expect(imported.ok).toBe(true);
    const r = await api['trials.checks']({ workspace, trait: 'y' });
    if (!r.ok) throw new Error(r.error.message);
    const c = r.data;
    const trials = Object.values(YEARS).reduce((n, s) => n + s.length, 0) + 1;
    expect(c.trials).toBe(trials);
    expect(c.singleTrialTreatments).toEqual(expect.arrayContaining([{ treatment: 'N4', trial: 'S1-2021' }, { treatment: 'Z0', trial: 'S9-2022' }, { treatment: 'Z1', trial: 'S9-2022' }]));
    expect(c.singleTrialTreatments).toHaveLength(3);
    expect(c.connectedGroups).toHaveLength(2);
    expect(c.disconnected).toEqual(['S9-2022']);
    // Every site-year's range from the generator: 0 (the control) to its top amount still tested.
    for (const [year, sites] of Object.entries(YEARS)) {
      for (const site of sites) {
        const trial = `${site}-${year}`;
        const [a1, a2, a3] = SITE_AMOUNTS[site];
        const amounts = new Set([0, a1, a2, ...((DROPPED_AMOUNTS[trial] ?? []).includes('N3') ? [] : [a3]), ...(trial === 'S1-2021' ? [200] : [])]);
        const range = c.ranges.find((x) => x.trial === trial && x.factor === 'rate');
        expect(range, trial).toEqual({ factor: 'rate', unit: 'kg/ha', trial, lowest: 0, highest: Math.max(...amounts), levels: amounts.size });
      }
    }
    expect(c.ranges.find((x) => x.trial === 'S9-2022')).toMatchObject({ lowest: 0, highest: 70, levels: 2 });
    expect(c.warnings.some((w) => w.startsWith('the trials fall into 2 groups that share no treatment'))).toBe(true);
  });

  it('names the traits the workspace holds when the trait is unknown', async () => {
    const r = await api['trials.checks']({ workspace: join(dir, 'w.manyfield'), trait: 'protein' });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error.message).toMatch(/no trait "protein" in this workspace; it holds "y"/);
  });
});
