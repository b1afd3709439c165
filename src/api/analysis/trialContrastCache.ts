// Contrasts resolved per trial (engine/contrasts/perTrial.ts) depend only on what the trial
// tested — its treatments with the levels applied there — so trials of one protocol share them.
// At thousands of trials the resolution (trend polynomials, factor-level matching) is computed
// once per distinct set instead of once per trial; the resolved contrasts are read, never changed.
import type { ResolvedContrast } from '../../engine/contrasts/resolve.js';
import type { TreatmentInfo } from '../../engine/types.js';

export class TrialContrastCache {
  private readonly byTested = new Map<string, readonly ResolvedContrast[]>();

  resolve(tested: readonly TreatmentInfo[], compute: () => readonly ResolvedContrast[]): readonly ResolvedContrast[] {
    // The key is JSON.stringify(tested.map((t) => [t.code, t.levels])), written from each
    // treatment's own part, kept per treatment object: a network's treatments are written once.
    const key = `[${tested.map(part).join(',')}]`;
    let hit = this.byTested.get(key);
    if (hit === undefined) {
      hit = compute();
      this.byTested.set(key, hit);
    }
    return hit;
  }
}

const parts = new WeakMap<TreatmentInfo, string>();

function part(t: TreatmentInfo): string {
  let p = parts.get(t);
  if (p === undefined) {
    p = JSON.stringify([t.code, t.levels]);
    parts.set(t, p);
  }
  return p;
}
