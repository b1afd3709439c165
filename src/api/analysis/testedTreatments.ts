// The treatments a trial tested, as far as the analysis can see: those with at least one plot
// that is analysed (a value, not excluded). Contrasts are resolved on these (perTrial.ts).
import type { TreatmentInfo, TrialInput } from '../../engine/types.js';

export function testedTreatments(trial: TrialInput, treatments: readonly TreatmentInfo[]): TreatmentInfo[] {
  const seen = new Set<string>();
  for (const p of trial.plots) if (!p.excluded && p.value !== null && Number.isFinite(p.value)) seen.add(p.treatment);
  return treatments.filter((t) => seen.has(t.code));
}
