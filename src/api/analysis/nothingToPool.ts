// The message when no trial can carry a contrast: which contrast, which trials and why each was
// left out, and what to change — in the user's terms, never the pooling engine's.
import type { ResolvedContrast } from '../../engine/contrasts/resolve.js';

const WHAT_TO_CHANGE: Record<ResolvedContrast['kind'], string> = {
  coefficients: 'write the coefficients over treatments that some trials tested together, or use a treated-against-control, factor or trend contrast, which follow what each trial tested',
  'treated-vs-control': 'check the spec\'s "control" names the untreated treatment the trials tested',
  'factor-levels': 'compare two levels that some trial tested with the same other-factor combination',
  trend: 'lower the trend\'s degree, or add trials that tested more distinct levels',
};

export function nothingToPool(contrast: ResolvedContrast, leftOut: readonly string[], trials: number): string {
  const shown = leftOut.length > 12 ? [...leftOut.slice(0, 12), `and ${leftOut.length - 12} more`] : leftOut;
  return `contrast "${contrast.name}": not pooled — none of the ${trials} trials can carry it. Left out, with the reason: ${shown.join('; ')}. To change: ${WHAT_TO_CHANGE[contrast.kind]}.`;
}
