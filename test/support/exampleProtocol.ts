// The protocol and contrasts of the DESIGN §5 example spec, shared by the tests that exercise
// it: untreated control plus 40/80/160 (unequally spaced) at two timings.
import type { TreatmentInfo } from '../../src/engine/types.js';

export const EXAMPLE_TREATMENTS: TreatmentInfo[] = [
  { code: 'CTL', levels: { rate: 0, timing: null } },
  { code: 'A1', levels: { rate: 40, timing: 'early' } },
  { code: 'A2', levels: { rate: 80, timing: 'early' } },
  { code: 'A4', levels: { rate: 160, timing: 'early' } },
  { code: 'B1', levels: { rate: 40, timing: 'late' } },
  { code: 'B2', levels: { rate: 80, timing: 'late' } },
  { code: 'B4', levels: { rate: 160, timing: 'late' } },
];

/** The three contrasts of the example spec, keys as written there. */
export const EXAMPLE_CONTRASTS = [
  { name: 'treated_vs_control', coefficients: { CTL: -6, A1: 1, A2: 1, A4: 1, B1: 1, B2: 1, B4: 1 }, divisor: 6 },
  { name: 'early_vs_late', factor: 'timing', levels: ['early', 'late'] },
  { name: 'rate_linear', trend: 'rate', degree: 1 },
];
