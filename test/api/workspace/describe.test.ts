// workspace.describe / workspace.create / sites.list against the demo workspace. Expected
// values come from the demo's own scenario (src/demo/scenario.ts) and from direct SQL counts.
import { describe, expect, it } from 'vitest';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { api } from '../../../src/api/handlers.js';
import { DEMO_NETWORK_NAME, DEMO_SITES, DEMO_TREATMENTS, DEMO_YEARS } from '../../../src/demo/scenario.js';
import { data, demoWorkspace, scratchDir } from '../support/demoWorkspace.js';

describe('workspace.describe', () => {
  it('describes the demo: name, counts equal to direct SQL counts, traits, years, the protocol', async () => {
    const path = await demoWorkspace();
    const d = data(await api['workspace.describe']({ workspace: path }));
    const db = new Database(path, { readonly: true });
    const count = (table: string): number => (db.prepare(`SELECT COUNT(*) AS n FROM ${table}`).get() as { n: number }).n;
    expect(d.counts).toEqual({ sites: count('site'), trials: count('trial'), plots: count('plot'), observations: count('observation'), importBatches: count('import_batch') });
    db.close();
    expect(d.name).toBe(DEMO_NETWORK_NAME);
    expect(d.counts.trials).toBe(42);
    expect(d.counts.sites).toBe(DEMO_SITES.length);
    expect(d.traits.map((t) => t.name)).toEqual(['protein', 'yield']);
    expect(d.traits.find((t) => t.name === 'yield')).toMatchObject({ unit: 't/ha', kind: 'continuous', lower: 0, upper: null });
    expect(d.years).toEqual([...DEMO_YEARS]);
    expect(d.exclusions).toBe(0);
    expect(d.protocols).toHaveLength(1);
    const p = d.protocols[0];
    expect(p.control).toBe('CTL');
    expect(p.factors).toEqual([
      { name: 'rate', kind: 'numeric', unit: 'kg/ha' },
      { name: 'timing', kind: 'categorical', unit: null },
    ]);
    expect(p.treatments.map((t) => t.code).sort()).toEqual(DEMO_TREATMENTS.map((t) => t.code).sort());
    expect(p.treatments.find((t) => t.code === 'A4')?.levels).toEqual({ rate: 160, timing: 'early' });
    expect(p.treatments.find((t) => t.code === 'CTL')?.levels).toEqual({ rate: 0, timing: null });
  });

  it('says which file is missing', async () => {
    const r = await api['workspace.describe']({ workspace: join(scratchDir(), 'absent.manyfield') });
    expect(r).toMatchObject({ ok: false, error: { code: 'not-found' } });
  });
});

describe('workspace.create', () => {
  it('creates an empty valid workspace named after its file', async () => {
    const path = join(scratchDir(), 'fresh network.manyfield');
    const d = data(await api['workspace.create']({ workspace: path }));
    expect(d.name).toBe('fresh network');
    expect(d.counts).toEqual({ sites: 0, trials: 0, plots: 0, observations: 0, importBatches: 0 });
    expect(data(await api['workspace.describe']({ workspace: path })).counts.trials).toBe(0);
  });

  it('refuses an existing file and leaves it untouched', async () => {
    const path = join(scratchDir(), 'taken.manyfield');
    writeFileSync(path, 'not a workspace');
    expect(await api['workspace.create']({ workspace: path })).toMatchObject({ ok: false, error: { code: 'conflict' } });
    expect(readFileSync(path, 'utf8')).toBe('not a workspace');
  });

  it('refuses a folder that does not exist without creating anything', async () => {
    const path = join(scratchDir(), 'no-folder', 'x.manyfield');
    expect(await api['workspace.create']({ workspace: path })).toMatchObject({ ok: false, error: { code: 'not-found' } });
    expect(existsSync(path)).toBe(false);
  });
});

describe('sites.list', () => {
  it('lists every demo site with its position, covariates with units, and its trials', async () => {
    const sites = data(await api['sites.list']({ workspace: await demoWorkspace() }));
    expect(sites.map((s) => s.code)).toEqual(DEMO_SITES.map((s) => s.code).sort());
    for (const expected of DEMO_SITES) {
      const s = sites.find((x) => x.code === expected.code)!;
      expect(s).toMatchObject({ name: expected.name, region: expected.region, lat: expected.lat, lon: expected.lon });
      expect(s.covariates).toEqual({
        soil_ph: { value: expected.soilPh, unit: 'pH' },
        organic_matter: { value: expected.organicMatter, unit: '%' },
        rainfall_normal: { value: expected.rainfallNormal, unit: 'mm' },
      });
      expect(s.years.every((y) => (DEMO_YEARS as readonly number[]).includes(y))).toBe(true);
      expect(s.trials).toBeGreaterThanOrEqual(s.years.length);
    }
    expect(sites.reduce((n, s) => n + s.trials, 0)).toBe(42);
  });
});
