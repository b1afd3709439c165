// Turns a contrast spec (custom coefficients, factor levels, trend, treated vs control) into
// explicit coefficients over treatment codes with a divisor. Every stage — trial, one-stage,
// pooling — uses these resolved contrasts, so a contrast means the same thing everywhere:
// estimate = sum_i coefficient_i * mean_i / divisor.
import type { ContrastSpec } from '../../spec/analysisSpec.js';
import type { FactorInfo, TreatmentInfo } from '../types.js';
import { orthogonalPolynomialScores } from './orthogonalPolynomial.js';

import { factorLevelsContrast } from './factorLevels.js';

export type ContrastKind = 'coefficients' | 'factor-levels' | 'trend' | 'treated-vs-control';

export interface ResolvedContrast {
  readonly name: string;
  readonly kind: ContrastKind;
  /** Coefficient per treatment code (zero for codes not involved), before the divisor. */
  readonly coefficients: Readonly<Record<string, number>>;
  readonly divisor: number;
  /** Plain description of what the estimate measures (shown beside results). */
  readonly meaning: string;
  /**
   * Set when this trial cannot carry the contrast (resolved on what the trial tested): why, in
   * words, and what would let it in. The coefficients are then all zero.
   */
  readonly leftOut?: string;
}

export class ContrastDefinitionError extends Error {
  constructor(readonly contrast: string, message: string) {
    super(`contrast "${contrast}": ${message}`);
    this.name = 'ContrastDefinitionError';
  }
}

/** Relative tolerance for "coefficients sum to zero". */
const SUM_TOLERANCE = 1e-9;

export function resolveContrast(spec: ContrastSpec, treatments: readonly TreatmentInfo[], control?: string, factors: readonly FactorInfo[] = []): ResolvedContrast {
  const codes = treatments.map((t) => t.code);
  const zero = (): Record<string, number> => Object.fromEntries(codes.map((c) => [c, 0]));
  if ('coefficients' in spec) {
    const coefficients = zero();
    let sum = 0;
    let scale = 0;
    for (const [code, value] of Object.entries(spec.coefficients)) {
      if (!(code in coefficients)) throw new ContrastDefinitionError(spec.name, `unknown treatment code "${code}" (known: ${codes.join(', ')})`);
      coefficients[code] = value;
      sum += value;
      scale = Math.max(scale, Math.abs(value));
    }
    if (scale === 0) throw new ContrastDefinitionError(spec.name, 'all coefficients are zero');
    if (Math.abs(sum) > SUM_TOLERANCE * scale * codes.length)
      throw new ContrastDefinitionError(spec.name, `coefficients must sum to zero; they sum to ${sum}`);
    return { name: spec.name, kind: 'coefficients', coefficients, divisor: spec.divisor, meaning: 'custom coefficients / divisor' };
  }
  if ('kind' in spec) {
    if (!control) throw new ContrastDefinitionError(spec.name, 'no control treatment is set (spec key "control")');
    if (!codes.includes(control)) throw new ContrastDefinitionError(spec.name, `control "${control}" is not a treatment code`);
    const coefficients = zero();
    const treated = codes.filter((c) => c !== control);
    for (const c of treated) coefficients[c] = 1;
    coefficients[control] = -treated.length;
    return {
      name: spec.name,
      kind: 'treated-vs-control',
      coefficients,
      divisor: treated.length,
      meaning: `mean of the ${treated.length} treated treatments minus the control ${control}`,
    };
  }
  if ('factor' in spec) {
    if (!treatments.some((t) => spec.factor in t.levels)) throw new ContrastDefinitionError(spec.name, `unknown factor "${spec.factor}"`);
    const [a, b] = spec.levels.map(String);
    return factorLevelsContrast(spec.name, spec.factor, a, b, treatments, zero());
  }
  const factor = spec.trend;
  const points = treatments.filter((t) => typeof t.levels[factor] === 'number');
  if (points.length === 0) throw new ContrastDefinitionError(spec.name, `no treatment has a numeric level of "${factor}"`);
  const x = points.map((t) => t.levels[factor] as number);
  const distinct = new Set(x).size;
  if (distinct <= spec.degree)
    throw new ContrastDefinitionError(spec.name, `a degree-${spec.degree} trend needs at least ${spec.degree + 1} distinct levels of "${factor}"; found ${distinct}`);
  const coefficients = zero();
  const over = trendPoints(factor, points, x, control, factors.find((f) => f.name === factor)?.unit);
  if (spec.degree === 1) {
    const mean = x.reduce((s, v) => s + v, 0) / x.length;
    let ss = 0;
    points.forEach((t, i) => {
      coefficients[t.code] = x[i] - mean;
      ss += (x[i] - mean) ** 2;
    });
    return {
      name: spec.name,
      kind: 'trend',
      coefficients,
      divisor: ss,
      meaning: `linear slope per unit of ${factor}, ${over}`,
    };
  }
  const scores = orthogonalPolynomialScores(x, spec.degree);
  points.forEach((t, i) => (coefficients[t.code] = scores[spec.degree - 1][i]));
  return {
    name: spec.name,
    kind: 'trend',
    coefficients,
    divisor: 1,
    meaning: `degree-${spec.degree} orthogonal polynomial component in ${factor} (unit-length scores on the actual spacing), ${over}`,
  };
}

/**
 * "trend over CTL, A1, A2 at rate 0, 40, 80 kg/ha" plus how the control entered: the reader sees
 * which treatments and rates the trend used, and the one rule for the control's rate.
 */
function trendPoints(factor: string, points: readonly TreatmentInfo[], x: readonly number[], control: string | undefined, unit: string | undefined): string {
  // Listed by rate, then code, so the reader can pair each code with its rate.
  const order = points.map((t, i) => i).sort((a, b) => x[a] - x[b] || (points[a].code < points[b].code ? -1 : 1));
  const rates = [...new Set(order.map((i) => x[i]))].map((v) => String(Number(v.toPrecision(10))));
  const at = `trend over ${order.map((i) => points[i].code).join(', ')} at ${factor}s ${rates.join(', ')}${unit ? ` ${unit}` : ''}`;
  if (control === undefined) return at;
  const inTrend = points.some((t) => t.code === control);
  return inTrend
    ? `${at} (the untreated control ${control} at ${factor} ${String(x[points.findIndex((t) => t.code === control)])}: it received none of the input)`
    : `${at} (the control ${control} has no ${factor} level, so it is not part of this trend)`;
}

function levelMatches(level: string | number | null | undefined, wanted: string): boolean {
  if (level === null || level === undefined) return false;
  return String(level) === wanted;
}

/** Treatment codes with a non-zero coefficient: all must be present for the contrast to be estimable. */
export function involvedTreatments(c: ResolvedContrast): string[] {
  return Object.entries(c.coefficients)
    .filter(([, v]) => v !== 0)
    .map(([k]) => k);
}
