// Renaming and deleting saved analyses through the api (migration 0005 holds the name). The
// reference is the workspace itself: after a rename the listing and the opened analysis carry the
// name; after a delete no row of the analysis is left in any of its three tables, and the other
// analysis is untouched.
import { describe, expect, it } from 'vitest';
import { api } from '../../../src/api/handlers.js';
import { unwrap } from '../../../src/api/result.js';
import { openWorkspace } from '../../../src/store/index.js';
import { demoCopy } from '../support/demoWorkspace.js';

const spec = { trait: 'yield', control: 'CTL', contrasts: [{ name: 'treated_vs_control', kind: 'treated-vs-control' as const }], oneStage: null };

describe('renaming and deleting saved analyses', () => {
  it('renames, clears a name, deletes every row of one analysis and refuses unknown ids', async () => {
    const workspace = await demoCopy();
    unwrap(await api['analysis.run']({ workspace, spec }));
    unwrap(await api['analysis.run']({ workspace, spec }));
    const [second, first] = unwrap(await api['analysis.list']({ workspace }));
    expect(first.name).toBeNull();

    expect(unwrap(await api['analysis.rename']({ workspace, analysis: first.id, name: '  all sites  ' }))).toEqual({ id: first.id, name: 'all sites' });
    expect(unwrap(await api['analysis.list']({ workspace })).find((a) => a.id === first.id)?.name).toBe('all sites');
    expect(unwrap(await api['analysis.open']({ workspace, analysis: first.id })).name).toBe('all sites');
    expect(unwrap(await api['analysis.rename']({ workspace, analysis: first.id, name: '' })).name).toBeNull();

    const tooLong = await api['analysis.rename']({ workspace, analysis: first.id, name: 'x'.repeat(201) });
    expect(tooLong.ok).toBe(false);

    unwrap(await api['analysis.delete']({ workspace, analysis: first.id }));
    const left = unwrap(await api['analysis.list']({ workspace }));
    expect(left.map((a) => a.id)).toEqual([second.id]);
    const ws = openWorkspace(workspace);
    try {
      for (const [table, column] of [['analysis', 'id'], ['analysis_result', 'analysis_id'], ['analysis_trial', 'analysis_id']] as const) {
        const count = ws.db.prepare(`SELECT COUNT(*) AS n FROM ${table} WHERE ${column} = ?`).get(first.id) as { n: number };
        expect(count.n, table).toBe(0);
      }
      const kept = ws.db.prepare('SELECT COUNT(*) AS n FROM analysis_trial WHERE analysis_id = ?').get(second.id) as { n: number };
      expect(kept.n).toBeGreaterThan(0);
    } finally {
      ws.close();
    }

    const gone = await api['analysis.delete']({ workspace, analysis: first.id });
    expect(gone.ok ? null : gone.error.code).toBe('not-found');
    const renameGone = await api['analysis.rename']({ workspace, analysis: first.id, name: 'x' });
    expect(renameGone.ok ? null : renameGone.error.code).toBe('not-found');
  }, 120_000);
});

describe('trials.covariates', () => {
  it('gives each trial the covariates its analysis sees: site values with the trial value on top', async () => {
    const workspace = await demoCopy();
    const list = unwrap(await api['trials.covariates']({ workspace }));
    const network = openWorkspace(workspace);
    try {
      const { loadNetwork } = await import('../../../src/store/index.js');
      const loaded = loadNetwork(network, 'yield');
      expect(list).toHaveLength(loaded.trials.length);
      for (const t of loaded.trials) expect(list.find((x) => x.trial === t.trial)?.covariates).toEqual(t.covariates);
    } finally {
      network.close();
    }
  }, 60_000);
});
