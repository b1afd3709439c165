// Storing plot tables: all-or-nothing, duplicate files, --replace, merging with what is stored,
// and the read side (listing, network loading, export round trip).
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { TreatmentInfo } from '../../src/engine/types.js';
import type { ParsedPlotTable } from '../../src/intake/types.js';
import {
  ImportRefusedError,
  counts,
  excludePlot,
  exportTrait,
  getMeta,
  importParsedTable,
  includePlot,
  listTrials,
  loadAnalysis,
  loadNetwork,
  openWorkspace,
  saveAnalysis,
  setMeta,
  setSiteDetails,
  type Workspace,
} from '../../src/store/index.js';
import { SYNTH_TREATMENTS, syntheticTable } from './support/syntheticTable.js';
import { tableFromExport } from './support/tableFromExport.js';
import { tempDirs } from './support/temp.js';

const newDir = tempDirs();

function freshWorkspace(): Workspace {
  return openWorkspace(path.join(newDir(), 'w.manyfield'), { create: true });
}

function refusal(fn: () => unknown): ImportRefusedError {
  try {
    fn();
  } catch (e) {
    if (e instanceof ImportRefusedError) return e;
    throw e;
  }
  throw new Error('expected the import to be refused');
}

function foreignKeyProblems(ws: Workspace): unknown[] {
  return ws.db.pragma('foreign_key_check') as unknown[];
}

describe('importParsedTable', () => {
  it('stores every trial, plot and observation and reports what it did', () => {
    const ws = freshWorkspace();
    const table = syntheticTable({ trials: 6 });
    const seen: [number, number][] = [];
    const s = importParsedTable(ws, table, { onProgress: (d, t) => seen.push([d, t]) });
    expect(s).toMatchObject({ trials: 6, plots: 168, observations: 168, rowsRead: 168, rowsStored: 168, sha256: table.sha256, replaced: null, newSites: 2, newTreatments: 7 });
    expect(counts(ws)).toEqual({ sites: 2, trials: 6, plots: 168, observations: 168, importBatches: 1 });
    expect(seen.at(-1)).toEqual([336, 336]);
    expect(foreignKeyProblems(ws)).toEqual([]);
    expect(ws.db.pragma('foreign_keys', { simple: true })).toBe(1); // enforcement restored after the import
    ws.close();
  });

  it('is cancelled by throwing from onProgress, storing nothing and keeping the workspace usable', () => {
    const ws = freshWorkspace();
    importParsedTable(ws, syntheticTable({ trials: 2, prefix: 'Keep' }));
    const before = counts(ws);
    const big = syntheticTable({ trials: 2000 });
    let calls = 0;
    expect(() =>
      importParsedTable(ws, big, {
        onProgress: () => {
          if (++calls === 3) throw new Error('cancelled by the user');
        },
      }),
    ).toThrow('cancelled by the user');
    expect(counts(ws)).toEqual(before);
    expect(ws.db.inTransaction).toBe(false);
    expect(ws.db.pragma('foreign_keys', { simple: true })).toBe(1);
    importParsedTable(ws, big); // the same file can then be imported normally
    expect(counts(ws).plots).toBe(before.plots + 2000 * 28);
    ws.close();
  });

  it('refuses a file already imported (same SHA-256) and changes nothing', () => {
    const ws = freshWorkspace();
    const table = syntheticTable({ trials: 4 });
    importParsedTable(ws, table);
    const before = counts(ws);
    const e = refusal(() => importParsedTable(ws, { ...table, file: 'renamed.csv' }));
    expect(e.reason).toBe('duplicate-file');
    expect(e.code).toBe('conflict');
    expect(e.message).toMatch(/already imported/);
    expect(e.message).toMatch(/--replace/);
    expect(counts(ws)).toEqual(before);
    ws.close();
  });

  it('replaces the earlier batch of the same file with --replace, in one step', () => {
    const ws = freshWorkspace();
    const first = syntheticTable({ trials: 6, seed: 3 });
    importParsedTable(ws, first);
    const other = syntheticTable({ trials: 2, prefix: 'Other' });
    importParsedTable(ws, other);
    // Same file hash, different content (say the reader was fixed): 3 trials instead of 6.
    const second = { ...syntheticTable({ trials: 3, seed: 4 }), sha256: first.sha256 };
    const s = importParsedTable(ws, second, { replace: true });
    expect(s.replaced).toEqual({ batchId: 1, trials: 6, plots: 168, observations: 168 });
    expect(counts(ws)).toMatchObject({ trials: 5, plots: 5 * 28, observations: 5 * 28, importBatches: 2 });
    const values = loadNetwork(ws, 'yield').trials.find((t) => t.trial === second.trials[0].key)!.plots.map((p) => p.value);
    expect(values).toEqual(second.observations.slice(0, 28).map((o) => o.value));
    expect(ws.db.prepare('SELECT COUNT(*) AS n FROM trial_covariate').get()).toEqual({ n: 5 * 2 });
    expect(foreignKeyProblems(ws)).toEqual([]);
    ws.close();
  });

  it('refuses a treatment whose factor levels disagree with the stored ones, naming it, and stores nothing', () => {
    const ws = freshWorkspace();
    importParsedTable(ws, syntheticTable({ trials: 3 }));
    const before = counts(ws);
    const bad: TreatmentInfo[] = SYNTH_TREATMENTS.map((t) => (t.code === 'A2' ? { ...t, levels: { rate: 90, timing: 'early' } } : t));
    const e = refusal(() => importParsedTable(ws, syntheticTable({ trials: 50, prefix: 'New', treatments: bad })));
    expect(e.reason).toBe('treatment-conflict');
    expect(e.message).toContain('"A2"');
    expect(e.message).toMatch(/rate = 90 in the file but 80 in the workspace/);
    expect(e.details).toMatchObject({ treatment: 'A2', factor: 'rate', stored: 80, file: 90 });
    expect(counts(ws)).toEqual(before); // not even the new sites
    ws.close();
  });

  it('treats "not applicable" as a level: a control given a timing is a conflict', () => {
    const ws = freshWorkspace();
    importParsedTable(ws, syntheticTable({ trials: 2 }));
    const bad = SYNTH_TREATMENTS.map((t) => (t.code === 'CTL' ? { ...t, levels: { rate: 0, timing: 'early' } } : t));
    const e = refusal(() => importParsedTable(ws, syntheticTable({ trials: 2, prefix: 'X', treatments: bad })));
    expect(e.message).toMatch(/timing = "early" in the file but not applicable in the workspace/);
  });

  it('merges new treatments and sites into the stored protocol', () => {
    const ws = freshWorkspace();
    importParsedTable(ws, syntheticTable({ trials: 2 }));
    const extra = [...SYNTH_TREATMENTS, { code: 'A3', levels: { rate: 120, timing: 'early' } }];
    const s = importParsedTable(ws, syntheticTable({ trials: 2, prefix: 'M', treatments: extra }));
    expect(s.newTreatments).toBe(1);
    expect(s.newSites).toBe(1);
    const net = loadNetwork(ws, 'yield');
    expect(net.treatments.map((t) => t.code)).toEqual(['CTL', 'A1', 'A2', 'A4', 'B1', 'B2', 'B4', 'A3']);
    expect(net.treatments.find((t) => t.code === 'A3')!.levels).toEqual({ rate: 120, timing: 'early' });
  });

  it('refuses a trial that another file already brought in (same site, year and key)', () => {
    const ws = freshWorkspace();
    importParsedTable(ws, syntheticTable({ trials: 3, seed: 1, file: 'first.csv' }));
    const before = counts(ws);
    const e = refusal(() => importParsedTable(ws, syntheticTable({ trials: 3, seed: 2, file: 'second.csv' })));
    expect(e.reason).toBe('trial-exists');
    // Every conflicting trial is listed, not only the first (hardening finding 7).
    expect(e.message).toMatch(/^3 trial\(s\) of this file are already in the workspace/);
    for (const key of ['S000-2015', 'S000-2016', 'S000-2017']) expect(e.message).toContain(`trial "${key}" at site "S000" in ${key.slice(-4)} (imported from "first.csv")`);
    expect((e.details as { trials: unknown[] }).trials).toHaveLength(3);
    expect(counts(ws)).toEqual(before);
  });

  it('--replace replaces the trials a corrected file brings (same site, year and trial), whatever its hash', () => {
    const ws = freshWorkspace();
    importParsedTable(ws, syntheticTable({ trials: 4, sites: 1, seed: 1, file: 'first.csv' }));
    const before = counts(ws);
    const firstValues = loadNetwork(ws, 'yield').trials.find((t) => t.trial === 'S000-2018')!.plots.map((p) => p.value);
    // The corrected file: the first three trials again with other values (another SHA-256).
    const corrected = syntheticTable({ trials: 3, sites: 1, seed: 2, file: 'corrected.csv' });
    expect(corrected.sha256).not.toBe(syntheticTable({ trials: 4, sites: 1, seed: 1 }).sha256);
    const s = importParsedTable(ws, corrected, { replace: true });
    expect(s.replaced).toMatchObject({ trials: 3, plots: 3 * 28, observations: 3 * 28 });
    expect(counts(ws)).toEqual({ ...before, importBatches: 2 }); // same trials, plots and values in number
    const after = loadNetwork(ws, 'yield');
    expect(after.trials.map((t) => t.trial).sort()).toEqual(['S000-2015', 'S000-2016', 'S000-2017', 'S000-2018']);
    // The replaced trials hold the corrected values; the fourth keeps the first file's.
    const fourth = after.trials.find((t) => t.trial === 'S000-2018')!;
    expect(fourth.plots.map((p) => p.value)).toEqual(firstValues);
    const byTrial = new Map(corrected.trials.map((t) => [t.key, t]));
    for (const t of after.trials.filter((x) => byTrial.has(x.trial))) {
      const want = corrected.observations.filter((o) => corrected.plots[o.plot].trialKey === t.trial).map((o) => o.value);
      expect(t.plots.map((p) => p.value)).toEqual(want);
    }
    // Both batches remain: the first still owns its fourth trial.
    expect((ws.db.prepare('SELECT COUNT(*) AS n FROM import_batch').get() as { n: number }).n).toBe(2);
  });

  it('--replace drops an earlier batch once all its trials are replaced', () => {
    const ws = freshWorkspace();
    importParsedTable(ws, syntheticTable({ trials: 2, seed: 1, file: 'first.csv' }));
    importParsedTable(ws, syntheticTable({ trials: 2, seed: 3, file: 'corrected.csv' }), { replace: true });
    const batches = ws.db.prepare('SELECT file_name FROM import_batch').all() as { file_name: string }[];
    expect(batches.map((b) => b.file_name)).toEqual(['corrected.csv']);
  });

  it('enforces the bounds stored with a trait on every later import, naming the cell', () => {
    const ws = freshWorkspace();
    const first = syntheticTable({ trials: 2, seed: 1, file: 'first.csv' });
    importParsedTable(ws, { ...first, traits: [{ ...first.traits[0], lower: 0 }] });
    const before = counts(ws);
    const second = syntheticTable({ trials: 2, prefix: 'N', seed: 2, file: 'second.csv' });
    // The second file's mapping gives no bounds; the stored lower bound 0 still holds.
    const negative: ParsedPlotTable = { ...second, traits: [{ ...second.traits[0], lower: null }], observations: second.observations.map((o, i) => (i === 5 ? { ...o, value: -5 } : o)) };
    const e = refusal(() => importParsedTable(ws, negative));
    expect(e.reason).toBe('trait-bounds');
    expect(e.code).toBe('invalid-input');
    expect(e.message).toContain(`second.csv, row ${second.plots[second.observations[5].plot].sourceRow}`);
    expect(e.message).toMatch(/value -5 t\/ha: trait "yield" is stored with bounds 0 to inf/);
    expect(counts(ws)).toEqual(before);
  });

  it('keeps trial names unique across files: a key already used elsewhere is qualified by site and year', () => {
    const ws = freshWorkspace();
    const renamed = (prefix: string): ParsedPlotTable => {
      const t = syntheticTable({ trials: 1, prefix });
      const old = t.trials[0].key;
      return { ...t, trials: [{ ...t.trials[0], key: 'T1' }], plots: t.plots.map((p) => ({ ...p, trialKey: 'T1' })), trialCovariates: { T1: t.trialCovariates[old] } };
    };
    importParsedTable(ws, renamed('A'));
    importParsedTable(ws, renamed('B'));
    expect(listTrials(ws).map((t) => t.label)).toEqual(['T1', 'T1 (B000 2015)']);
    expect(loadNetwork(ws, 'yield').trials.map((t) => t.trial)).toEqual(['T1', 'T1 (B000 2015)']);
  });

  it('refuses a trait stored with another unit, and a table that contradicts itself', () => {
    const ws = freshWorkspace();
    importParsedTable(ws, syntheticTable({ trials: 2 }));
    const before = counts(ws);
    const t = syntheticTable({ trials: 2, prefix: 'U' });
    const kg: ParsedPlotTable = { ...t, traits: [{ ...t.traits[0], unit: 'kg/ha' }] };
    expect(refusal(() => importParsedTable(ws, kg)).reason).toBe('trait-conflict');

    const unknownTrait: ParsedPlotTable = { ...t, observations: [...t.observations.slice(0, -1), { plot: 0, trait: 'protein', value: 1 }] };
    expect(refusal(() => importParsedTable(ws, unknownTrait)).reason).toBe('inconsistent-table');
    const twice: ParsedPlotTable = { ...t, observations: [...t.observations, { plot: 5, trait: 'yield', value: 1 }] };
    const e = refusal(() => importParsedTable(ws, twice));
    expect(e.reason).toBe('inconsistent-table');
    expect(e.message).toMatch(/two values of the same trait/);
    const badTrial: ParsedPlotTable = { ...t, plots: [...t.plots, { ...t.plots[0], trialKey: 'nowhere' }] };
    expect(refusal(() => importParsedTable(ws, badTrial)).message).toMatch(/trial "nowhere"/);
    expect(counts(ws)).toEqual(before);
    expect(ws.db.pragma('foreign_keys', { simple: true })).toBe(1);
  });
});

describe('reading a workspace back', () => {
  it('lists trials with plots, treatments and traits', () => {
    const ws = freshWorkspace();
    importParsedTable(ws, syntheticTable({ trials: 4 }));
    const list = listTrials(ws);
    expect(list).toHaveLength(4);
    expect(list[0]).toEqual({ id: 1, label: 'S000-2015', site: 'S000', year: 2015, design: 'randomised-blocks', plots: 28, treatments: 7, traits: ['yield'] });
    expect(list.map((t) => `${t.site}/${t.year}`)).toEqual(['S000/2015', 'S000/2016', 'S001/2015', 'S001/2016']);
  });

  it('loads the network of a trait: values, levels, control, merged covariates, exclusions with reasons', () => {
    const ws = freshWorkspace();
    const table = syntheticTable({ trials: 3, sites: 3 });
    importParsedTable(ws, table);
    setSiteDetails(ws, 'S001', { region: 'North', lat: 45.5, covariates: { om: 2.5, ph: 9.9, soil: 'loam' } });
    const firstPlotOfTrial2 = 28 + 1;
    excludePlot(ws, firstPlotOfTrial2, 'hail damage');
    const net = loadNetwork(ws, 'yield');
    expect(net).toMatchObject({ trait: 'yield', unit: 't/ha', traitKind: 'continuous', control: 'CTL' });
    expect(net.factors).toEqual([{ name: 'rate', kind: 'numeric', unit: 'kg/ha' }, { name: 'timing', kind: 'categorical' }]);
    expect(net.treatments.find((t) => t.code === 'CTL')!.levels).toEqual({ rate: 0, timing: null });
    expect(net.trials.map((t) => t.trial)).toEqual(table.trials.map((t) => t.key));
    net.trials.forEach((trial, k) => {
      expect(trial.plots.map((p) => p.value)).toEqual(table.observations.slice(28 * k, 28 * k + 28).map((o) => o.value));
      expect(trial.plots.map((p) => p.treatment)).toEqual(table.plots.slice(28 * k, 28 * k + 28).map((p) => p.treatment));
    });
    const t2 = net.trials[1];
    expect(t2.site).toBe('S001');
    // Site covariates merged in; the trial's own pH wins over the site's.
    expect(t2.covariates).toEqual({ om: 2.5, soil: 'loam', ph: table.trialCovariates[t2.trial].ph, previous_crop: table.trialCovariates[t2.trial].previous_crop });
    expect(t2.plots[0].excluded).toEqual({ reason: 'hail damage' });
    expect(t2.plots.filter((p) => p.excluded)).toHaveLength(1);
    includePlot(ws, firstPlotOfTrial2);
    expect(loadNetwork(ws, 'yield').trials[1].plots[0].excluded).toBeNull();
    expect(() => excludePlot(ws, 1, '  ')).toThrow(/needs a reason/);
    expect(() => excludePlot(ws, 99999, 'x')).toThrow(/no plot with id 99999/);
    expect(() => loadNetwork(ws, 'protein')).toThrow(/no trait "protein" in this workspace; it holds "yield"/);
    expect(loadNetwork(ws, 'yield', { trials: [3, 1] }).trials.map((t) => t.trial)).toEqual([table.trials[2].key, table.trials[0].key]);
  });

  it('round-trips import -> export -> import into a fresh workspace with the same content', () => {
    const a = freshWorkspace();
    importParsedTable(a, syntheticTable({ trials: 9, seed: 11 }));
    const exported = exportTrait(a, 'yield');
    expect(exported.header).toEqual(['site', 'year', 'trial', 'design', 'block', 'row', 'col', 'treatment', 'rate', 'timing', 'ph', 'previous_crop', 'yield']);
    expect(exported.rows).toHaveLength(9 * 28);
    expect(exported.rows.some((r) => r.at(-1) === null)).toBe(true); // missing plots travel as empty cells

    const b = freshWorkspace();
    importParsedTable(b, tableFromExport(exported));
    expect(exportTrait(b, 'yield')).toEqual(exported);
    // Row ids follow the export's order (site, year), so compare content without them.
    const listing = (ws: Workspace) => listTrials(ws).map(({ id: _id, ...rest }) => rest);
    const network = (ws: Workspace) => {
      const n = loadNetwork(ws, 'yield');
      // The file row differs too: the export is ordered by site and year, the synthetic table is not.
      return { ...n, trials: n.trials.map((t) => ({ ...t, plots: t.plots.map(({ plotId: _p, sourceRow: _r, ...rest }) => rest) })) };
    };
    expect(listing(b)).toEqual(listing(a));
    expect(network(b)).toEqual(network(a));
    expect(counts(b)).toEqual(counts(a));
  });
});

describe('meta and analyses', () => {
  it('stores JSON values by key', () => {
    const ws = freshWorkspace();
    expect(getMeta(ws, 'demo.truth')).toBeUndefined();
    setMeta(ws, 'demo.truth', { tau2: 0.25, effects: [1, 2.5] });
    expect(getMeta(ws, 'demo.truth')).toEqual({ tau2: 0.25, effects: [1, 2.5] });
    setMeta(ws, 'demo.truth', 3);
    expect(getMeta(ws, 'demo.truth')).toBe(3);
  });

  it('saves an analysis with its spec, fingerprint, version and one result row per part', () => {
    const ws = freshWorkspace();
    const id = saveAnalysis(ws, { trait: 'yield' }, 'f'.repeat(64), { oneStage: { logLik: -12.5 }, warnings: ['w'] }, { now: () => new Date('2026-01-02T03:04:05Z') });
    const a = loadAnalysis(ws, id);
    expect(a).toMatchObject({ id, spec: { trait: 'yield' }, dataFingerprint: 'f'.repeat(64), createdAt: '2026-01-02T03:04:05.000Z', status: 'complete' });
    expect(a.appVersion).toMatch(/^\d+\.\d+\.\d+/);
    expect(a.results).toEqual({ oneStage: { logLik: -12.5 }, warnings: ['w'] });
  });
});
