// The treatments a trial tested, as far as the analysis can see: those with at least one plot
// that is analysed (a value, not excluded), each with the levels applied in this trial (a
// treatment coded by level number carries its site's amount). Contrasts are resolved on these.
import type { TreatmentInfo, TrialInput } from '../../engine/types.js';

export function testedTreatments(trial: TrialInput, treatments: readonly TreatmentInfo[]): TreatmentInfo[] {
  const seen = new Set<string>();
  for (const p of trial.plots) if (!p.excluded && p.value !== null && Number.isFinite(p.value)) seen.add(p.treatment);
  const applied = trial.appliedLevels ?? {};
  return treatments
    .filter((t) => seen.has(t.code))
    .map((t) => (Object.hasOwn(applied, t.code) ? { ...t, levels: { ...t.levels, ...applied[t.code] } } : t));
}
