// One row per trial for the network screen: size, how many plots are excluded or missing for
// the trait, mean and CV, and the trial stage's data-quality flags (no contrasts: cheap).
import type { TrialDesign } from '../../engine/types.js';
import { listTrials, loadNetwork, openWorkspace } from '../../store/index.js';
import { findTrait, trialsWithTrait } from '../../store/network.js';
import { throwIfCancelled, type CallContext } from '../context.js';
import { runTrialStage } from './trialStage.js';

export interface QualityFlag {
  readonly code: string;
  readonly message: string;
}

export interface TrialOverviewEntry {
  readonly id: number;
  readonly label: string;
  readonly site: string;
  readonly year: number;
  readonly design: TrialDesign;
  readonly plots: number;
  readonly treatments: number;
  readonly traits: string[];
  /** Plots set aside by a user (any trait). */
  readonly excluded: number;
  /** Plots without a value of this trait (excluded plots not counted). */
  readonly missing: number;
  readonly mean: number | null;
  /** Coefficient of variation in %. */
  readonly cv: number | null;
  readonly flags: QualityFlag[];
}

export function trialsOverview(path: string, trait: string, ctx?: CallContext): TrialOverviewEntry[] {
  const ws = openWorkspace(path);
  try {
    const t = findTrait(ws, trait);
    const listing = listTrials(ws);
    const excluded = new Map(
      (ws.db.prepare('SELECT trial_id AS trial, COUNT(*) AS n FROM plot WHERE excluded = 1 GROUP BY trial_id').all() as { trial: number; n: number }[]).map((r) => [r.trial, r.n]),
    );
    // Trials of one protocol load together (a network holds one protocol per trait).
    const byProtocol = new Map<number, number[]>();
    for (const r of trialsWithTrait(ws, t.id)) byProtocol.set(r.protocol_id, [...(byProtocol.get(r.protocol_id) ?? []), r.id]);
    const stage = new Map<number, Pick<TrialOverviewEntry, 'missing' | 'mean' | 'cv' | 'flags'>>();
    const total = [...byProtocol.values()].reduce((n, ids) => n + ids.length, 0);
    let done = 0;
    for (const ids of byProtocol.values()) {
      const network = loadNetwork(ws, trait, { trials: ids });
      network.trials.forEach((trial, i) => {
        if (done++ % 50 === 0) {
          ctx?.onProgress?.({ stage: 'trial-stage', fraction: done / total });
          throwIfCancelled(ctx);
        }
        const missing = trial.plots.filter((p) => !p.excluded && p.value === null).length;
        const outcome = runTrialStage(trial, network, []);
        stage.set(
          ids[i],
          outcome.analysis === null
            ? { missing, mean: null, cv: null, flags: [{ code: 'not-analysable', message: outcome.error }] }
            : { missing, mean: outcome.analysis.anova.grandMean, cv: outcome.analysis.anova.cv, flags: outcome.analysis.flags.map((f) => ({ code: f.code, message: f.message })) },
        );
      });
    }
    return listing.map((r) => ({
      id: r.id,
      label: r.label,
      site: r.site,
      year: r.year,
      design: r.design,
      plots: r.plots,
      treatments: r.treatments,
      traits: r.traits,
      excluded: excluded.get(r.id) ?? 0,
      ...(stage.get(r.id) ?? { missing: r.plots, mean: null, cv: null, flags: [{ code: 'trait-not-measured', message: `this trial holds no values of "${t.name}"` }] }),
    }));
  } finally {
    ws.close();
  }
}
