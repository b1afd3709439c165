// A contrast resolved on what one trial tested. Real networks change their protocol over the
// years and sites drop treatments, so a contrast resolved once over the whole network's
// treatment list would leave out every trial that lacks one of them. Here:
// - a trend is fitted on the rates this trial tested (orthogonal polynomial on its own spacing;
//   degree 1 stays the slope per unit, comparable across trials);
// - treated against control compares the control with the mean of the treated present;
// - two levels of a factor are compared over the other-factor combinations tested at both;
// - custom coefficients keep their rule: every treatment with a non-zero coefficient present.
// A trial that cannot carry the contrast gets it with `leftOut` set to the reason.
import type { ContrastSpec } from '../../spec/analysisSpec.js';
import type { FactorInfo, TreatmentInfo } from '../types.js';
import { ContrastDefinitionError, involvedTreatments, resolveContrast, type ResolvedContrast } from './resolve.js';

export function resolveForTrial(
  spec: ContrastSpec,
  network: ResolvedContrast,
  present: readonly TreatmentInfo[],
  control: string | undefined,
  factors: readonly FactorInfo[],
): ResolvedContrast {
  const codes = new Set(present.map((t) => t.code));
  const leftOut = (reason: string): ResolvedContrast => ({ ...network, coefficients: {}, divisor: 1, leftOut: reason });
  if ('coefficients' in spec) {
    const absent = involvedTreatments(network).filter((c) => !codes.has(c));
    return absent.length === 0 ? network : leftOut(`not tested here: ${absent.join(', ')} (every treatment with a non-zero coefficient must be in the trial; write a contrast without ${absent.length > 1 ? 'them' : 'it'} to include this trial)`);
  }
  if ('kind' in spec) {
    if (control === undefined || !codes.has(control)) return leftOut(`the control ${control ?? '(none set)'} was not tested here`);
    if (present.every((t) => t.code === control)) return leftOut('no treated treatment was tested here');
  }
  if ('trend' in spec) {
    const rates = [...new Set(present.map((t) => t.levels[spec.trend]).filter((v): v is number => typeof v === 'number'))].sort((x, y) => x - y);
    if (rates.length < spec.degree + 1)
      return leftOut(`tested ${rates.length} distinct ${spec.trend} level${rates.length === 1 ? '' : 's'} (${rates.join(', ') || 'none'}); a degree-${spec.degree} trend needs at least ${spec.degree + 1}`);
  }
  try {
    return resolveContrast(spec, present, control, factors);
  } catch (e) {
    if (e instanceof ContrastDefinitionError) return leftOut(e.message.replace(/^contrast "[^"]*": /, ''));
    throw e;
  }
}
