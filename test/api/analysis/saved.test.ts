// Saved analyses through the api: the compact report is stored one row per trial (migration
// 0004), the summary opens without the trials, a page of trials comes back as reported, and one
// trial's detail is recomputed from the workspace data — equal to the full analysis the same
// run gives with detail 'plots' — or refused when that trial's data changed. An analysis saved
// the old way (trials inside the 'twoStage' row) still opens, read as it is. References: the
// api's own report of the same run (exact equality: the same code on the same data).
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { api } from '../../../src/api/handlers.js';
import { unwrap } from '../../../src/api/result.js';
import type { AnalysisReport, CompactAnalysisReport } from '../../../src/api/analysis/report.js';
import { openWorkspace } from '../../../src/store/index.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-saved-'));
const workspace = join(dir, 'demo.manyfield');
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const spec = {
  trait: 'yield',
  control: 'CTL',
  contrasts: [
    { name: 'treated_vs_control', kind: 'treated-vs-control' as const },
    { name: 'rate_linear', trend: 'rate', degree: 1 as const },
  ],
  oneStage: null,
  twoStage: { tau2: 'reml' as const, interval: 'hksj' as const },
};

let compact: CompactAnalysisReport;
let full: AnalysisReport;
let savedId: number;

beforeAll(async () => {
  unwrap(await api['demo.build']({ workspace }));
  compact = unwrap(await api['analysis.run']({ workspace, spec })) as CompactAnalysisReport;
  const list = unwrap(await api['analysis.list']({ workspace }));
  savedId = list[0].id;
  full = unwrap(await api['analysis.run']({ workspace, spec, detail: 'plots', save: false })) as AnalysisReport;
}, 120_000);

describe('saved analyses through the api', () => {
  it('lists the saved analysis with its trait and trial count', async () => {
    const list = unwrap(await api['analysis.list']({ workspace }));
    expect(list).toHaveLength(1);
    expect(list[0]).toMatchObject({ id: savedId, trait: 'yield', status: 'complete', trials: compact.trialsAnalysed });
  });

  it("opens the summary without the trials: each pool's headline as reported, a count in place of the trials; the per-trial tables on request", async () => {
    const open = unwrap(await api['analysis.open']({ workspace, analysis: savedId }));
    const twoStage = open.results.twoStage as { pooled: unknown[]; trialCount: number; trials?: unknown };
    expect(twoStage.trials).toBeUndefined();
    expect(twoStage.trialCount).toBe(compact.twoStage.trials.length);
    const headlines = compact.twoStage.pooled.map(({ weights: _w, sensitivity: _s, ...headline }) => headline);
    expect(twoStage.pooled).toEqual(JSON.parse(JSON.stringify(headlines)));
    expect(open.trials).toEqual([]);
    expect(open.results.provenance).toEqual(compact.provenance);
    const withTables = unwrap(await api['analysis.open']({ workspace, analysis: savedId, tables: true }));
    expect((withTables.results.twoStage as { pooled: unknown[] }).pooled).toEqual(JSON.parse(JSON.stringify(compact.twoStage.pooled)));
  });

  it('gives a page of trials in report order, each the summary the report carried', async () => {
    const open = unwrap(await api['analysis.open']({ workspace, analysis: savedId, trials: { offset: 5, limit: 10 } }));
    expect(open.trials.map((t) => t.position)).toEqual([5, 6, 7, 8, 9, 10, 11, 12, 13, 14]);
    open.trials.forEach((t, i) => expect(t.summary).toEqual(JSON.parse(JSON.stringify(compact.twoStage.trials[5 + i]))));
    expect(open.trials.every((t) => /^[0-9a-f]{64}$/.test(t.dataSha256 ?? ''))).toBe(true);
  });

  it("recomputes one trial's detail: equal to that trial's full analysis in a detail 'plots' run", async () => {
    for (const trial of [full.twoStage.trials[0].trial, full.twoStage.trials[full.twoStage.trials.length - 1].trial]) {
      const d = unwrap(await api['analysis.trial']({ workspace, analysis: savedId, trial }));
      expect(d.source).toBe('recomputed');
      const expected = full.twoStage.trials.find((t) => t.trial === trial);
      expect(JSON.parse(JSON.stringify(d.detail))).toEqual(JSON.parse(JSON.stringify(expected)));
      expect(d.detail.diagnostics.plots.length).toBe(d.detail.model.n);
    }
  });

  it('names an unknown trial or analysis plainly', async () => {
    const r = await api['analysis.trial']({ workspace, analysis: savedId, trial: 'NO-SUCH' });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error).toMatchObject({ code: 'not-found', message: expect.stringContaining('NO-SUCH') });
    const o = await api['analysis.open']({ workspace, analysis: 9999 });
    expect(o.ok).toBe(false);
    if (!o.ok) expect(o.error.code).toBe('not-found');
  });

  it('opens an analysis saved before per-trial rows (trials inside its twoStage row), read as it is', async () => {
    const ws = openWorkspace(workspace);
    let oldId: number;
    try {
      oldId = Number(
        ws.db.prepare("INSERT INTO analysis (spec_json, data_fingerprint, app_version, created_at, status) VALUES (?, 'x', '0.0.9', '2026-01-01T00:00:00Z', 'complete')").run(JSON.stringify(spec)).lastInsertRowid,
      );
      ws.db.prepare("INSERT INTO analysis_result (analysis_id, kind, payload_json) VALUES (?, 'twoStage', ?)").run(oldId, JSON.stringify(full.twoStage));
    } finally {
      ws.close();
    }
    const open = unwrap(await api['analysis.open']({ workspace, analysis: oldId, trials: { offset: 0, limit: 3 }, tables: true }));
    expect((open.results.twoStage as { trialCount: number }).trialCount).toBe(full.twoStage.trials.length);
    expect((open.results.twoStage as { pooled: unknown[] }).pooled).toEqual(JSON.parse(JSON.stringify(compact.twoStage.pooled)));
    expect(open.trials.map((t) => t.summary)).toEqual(JSON.parse(JSON.stringify(compact.twoStage.trials.slice(0, 3))));
    const trial = full.twoStage.trials[2].trial;
    const d = unwrap(await api['analysis.trial']({ workspace, analysis: oldId, trial }));
    expect(d.source).toBe('stored');
    expect(d.detail).toEqual(JSON.parse(JSON.stringify(full.twoStage.trials[2])));
  });

  it("refuses to recompute a trial whose data changed after the analysis was saved (conflict), and leaves the others", async () => {
    const trial = full.twoStage.trials[1].trial;
    const ws = openWorkspace(workspace);
    try {
      ws.db
        .prepare('UPDATE observation SET value = value + 1 WHERE plot_id = (SELECT p.id FROM plot p JOIN trial t ON t.id = p.trial_id WHERE t.label = ? ORDER BY p.id LIMIT 1)')
        .run(trial);
    } finally {
      ws.close();
    }
    const r = await api['analysis.trial']({ workspace, analysis: savedId, trial });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error).toMatchObject({ code: 'conflict', message: expect.stringContaining(trial) });
    expect(unwrap(await api['analysis.trial']({ workspace, analysis: savedId, trial: full.twoStage.trials[3].trial })).source).toBe('recomputed');
  });
});
