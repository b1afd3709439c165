// One warning, in words, when treatments stand for different amounts in different trials (coded
// by level number, with a site-specific amount): which, where, and what is done with it. The
// same opening serves the analysis (`analyze`) and the import that stores the amounts.
import type { TreatmentInfo } from '../../engine/types.js';

interface AmountsSource {
  readonly treatments: readonly TreatmentInfo[];
  readonly trials: readonly { readonly trial: string; readonly appliedLevels?: Readonly<Record<string, Readonly<Record<string, number>>>> }[];
}

/** "treatments were applied at different amounts in N trials (e.g. …)", or null when none were. */
export function describeSiteAmounts(source: AmountsSource): string | null {
  const examples: string[] = [];
  let trials = 0;
  for (const t of source.trials) {
    const applied = Object.entries(t.appliedLevels ?? {});
    if (applied.length === 0) continue;
    trials++;
    for (const [code, levels] of applied) {
      for (const [factor, amount] of Object.entries(levels)) {
        const planned = source.treatments.find((x) => x.code === code)?.levels[factor];
        if (examples.length < 3) examples.push(`${code} is ${factor} ${amount} in ${t.trial} (${String(planned)} where first seen)`);
      }
    }
  }
  if (trials === 0) return null;
  return `treatments were applied at different amounts in ${trials} trial${trials > 1 ? 's' : ''} (e.g. ${examples.join('; ')})`;
}

export function siteAmountsWarning(source: AmountsSource): string | null {
  const opening = describeSiteAmounts(source);
  return opening === null ? null : `${opening}: each trial's trends and rate curves use the amounts applied there; one-stage trends over treatment means are not compared with them.`;
}
