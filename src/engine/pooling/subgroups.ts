// Subgroup pooling for a categorical moderator: each level pooled on its own (its own tau²),
// then a between-group Q on the level estimates with inverse-variance weights from their
// model-based SEs, referred to chi-square on G - 1 df.
import { chisqUpper } from '../stats/distributions.js';
import { poolCore } from './poolCore.js';
import type { FitSettings } from './modelFit.js';
import type { PoolingItem, SubgroupAnalysis, SubgroupRow } from './types.js';
import { ownValue } from '../ownValue.js';

export function subgroupAnalysis(items: readonly PoolingItem[], moderator: string, levels: readonly string[], settings: FitSettings, threshold: number): SubgroupAnalysis {
  const groups: SubgroupRow[] = [];
  const means: number[] = [];
  const variances: number[] = [];
  for (const level of levels) {
    const members = items.filter((it) => {
      const v = ownValue(it.covariates, moderator);
      return v !== undefined && v !== null && String(v).trim() === level;
    });
    if (members.length === 0) continue;
    const pool = poolCore(
      members.map((m) => m.estimate),
      members.map((m) => m.se * m.se),
      settings,
      threshold,
      members.length === 1 ? (members[0].df ?? null) : null,
    );
    groups.push({ level, k: pool.k, estimate: pool.estimate, se: pool.se, lower: pool.lower, upper: pool.upper, tau2: pool.tau2 });
    means.push(pool.estimate);
    variances.push(pool.seConventional * pool.seConventional);
  }
  const G = means.length;
  let Qbetween: number | null = null;
  let QbetweenP: number | null = null;
  if (G >= 2) {
    let sw = 0;
    let swm = 0;
    for (let g = 0; g < G; g++) {
      sw += 1 / variances[g];
      swm += means[g] / variances[g];
    }
    const overall = swm / sw;
    Qbetween = 0;
    for (let g = 0; g < G; g++) Qbetween += (means[g] - overall) ** 2 / variances[g];
    QbetweenP = chisqUpper(Qbetween, G - 1);
  }
  return {
    moderator,
    groups,
    betweenGroups: Qbetween === null ? null : { Q: Qbetween, df: G - 1, p: QbetweenP },
    note:
      G >= 2
        ? 'Each level pooled separately with its own tau²; Q between groups uses the model-based SEs of the level estimates (chi-square on G - 1 df). Levels with one trial contribute that trial alone.'
        : 'Fewer than two levels with trials: no between-group test.',
  };
}
