// plots.exclude / plots.include / exclusions.list: record, list and undo an exclusion; refusals
// leave the workspace as it was.
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { api } from '../../../src/api/handlers.js';
import { data, demoCopy } from '../support/demoWorkspace.js';

async function somePlots(path: string): Promise<{ trial: number; trialLabel: string; plots: number[]; labels: string[] }> {
  const trial = data(await api['trials.list']({ workspace: path }))[0];
  const detail = data(await api['trial.detail']({ workspace: path, trial: trial.id, trait: 'yield' }));
  return { trial: trial.id, trialLabel: trial.label, plots: detail.plots.map((p) => p.id), labels: detail.plots.map((p) => p.label) };
}

describe('exclusions', () => {
  it('records an exclusion with its reason, lists it, counts it, and undoes it', async () => {
    const path = await demoCopy();
    const { trial, trialLabel, plots, labels } = await somePlots(path);
    expect(labels[3]).not.toBe(String(plots[3])); // the demo's own plot labels, not workspace ids
    expect(data(await api['plots.exclude']({ workspace: path, plot: plots[3], reason: '  hail damage  ' }))).toEqual({ plot: plots[3], excluded: true, reason: 'hail damage' });
    expect(data(await api['exclusions.list']({ workspace: path }))).toEqual([{ plot: plots[3], label: labels[3], trial, trialLabel, reason: 'hail damage' }]);
    expect(data(await api['workspace.describe']({ workspace: path })).exclusions).toBe(1);
    const detail = data(await api['trial.detail']({ workspace: path, trial, trait: 'yield' }));
    expect(detail.plots.find((p) => p.id === plots[3])).toMatchObject({ excluded: true, reason: 'hail damage', fitted: null });
    expect(detail.analysis!.model.n).toBe(plots.length - 1);

    expect(data(await api['plots.include']({ workspace: path, plot: plots[3] }))).toEqual({ plot: plots[3], excluded: false });
    expect(data(await api['exclusions.list']({ workspace: path }))).toEqual([]);
    expect(data(await api['trial.detail']({ workspace: path, trial, trait: 'yield' })).analysis!.model.n).toBe(plots.length);
  });

  it('refuses a blank reason, an unknown plot and undoing what is not excluded, changing nothing', async () => {
    const path = await demoCopy();
    const { plots } = await somePlots(path);
    const before = readFileSync(path);
    expect(await api['plots.exclude']({ workspace: path, plot: plots[0], reason: '   ' })).toMatchObject({ ok: false, error: { code: 'invalid-argument' } });
    expect(await api['plots.exclude']({ workspace: path, plot: 10_000_000, reason: 'x' })).toMatchObject({ ok: false, error: { code: 'not-found' } });
    expect(await api['plots.include']({ workspace: path, plot: plots[0] })).toMatchObject({ ok: false, error: { code: 'conflict' } });
    expect(await api['plots.include']({ workspace: path, plot: 10_000_000 })).toMatchObject({ ok: false, error: { code: 'not-found' } });
    expect(await api['plots.exclude']({ workspace: path, plot: 1.5, reason: 'x' } as never)).toMatchObject({ ok: false, error: { code: 'invalid-argument' } });
    expect(readFileSync(path).equals(before)).toBe(true);
  });
});
