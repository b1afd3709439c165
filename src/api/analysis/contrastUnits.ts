// The unit of each contrast's effect, so every effect can be printed with one: the trait's
// unit for differences of means, the trait's unit per rate unit for a linear trend, and the
// analysis scale's name when a transform is used (estimates then live on that scale).
import type { NetworkInput } from '../../engine/types.js';
import type { AnalysisSpec, ContrastSpec } from '../../spec/analysisSpec.js';

const SCALE_NAMES: Record<Exclude<AnalysisSpec['transform'], 'none'>, string> = {
  log: 'log ratio',
  logit: 'logit units',
  'arcsine-sqrt': 'arcsine-square-root units',
  sqrt: 'square-root units',
};

export function contrastUnit(contrast: ContrastSpec, network: Pick<NetworkInput, 'unit' | 'factors'>, transform: AnalysisSpec['transform']): string | null {
  const base = transform === 'none' ? (network.unit ?? null) : SCALE_NAMES[transform];
  if (!('trend' in contrast) || contrast.degree !== 1) return base;
  // a degree-1 trend is a slope: per unit of the factor
  const factorUnit = network.factors.find((f) => f.name === contrast.trend)?.unit;
  const per = factorUnit ? factorUnit : `unit of ${contrast.trend}`;
  return `${base ?? 'trait units'} per ${per}`;
}

export function contrastUnits(spec: AnalysisSpec, network: Pick<NetworkInput, 'unit' | 'factors'>): Record<string, string | null> {
  return Object.fromEntries(spec.contrasts.map((c) => [c.name, contrastUnit(c, network, spec.transform)]));
}
