// One warning, in words, when treatments stand for different amounts in different trials (coded
// by level number, with a site-specific amount): which, where, and what the analysis does with it.
import type { NetworkInput } from '../../engine/types.js';

export function siteAmountsWarning(network: NetworkInput): string | null {
  const examples: string[] = [];
  let trials = 0;
  for (const t of network.trials) {
    const applied = Object.entries(t.appliedLevels ?? {});
    if (applied.length === 0) continue;
    trials++;
    for (const [code, levels] of applied) {
      for (const [factor, amount] of Object.entries(levels)) {
        const planned = network.treatments.find((x) => x.code === code)?.levels[factor];
        if (examples.length < 3) examples.push(`${code} is ${factor} ${amount} in ${t.trial} (${String(planned)} where first seen)`);
      }
    }
  }
  if (trials === 0) return null;
  return `treatments were applied at different amounts in ${trials} trial${trials > 1 ? 's' : ''} (e.g. ${examples.join('; ')}): each trial's trends and rate curves use the amounts applied there; one-stage trends over treatment means are not compared with them.`;
}
