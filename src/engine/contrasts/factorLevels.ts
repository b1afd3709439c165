// Two levels of one factor compared only where the other factors were tested at both levels:
// "early against late" over the rates applied at both timings, so a rate tested at one timing
// only does not confound the comparison with rate. Each matched combination counts once:
// estimate = mean over combinations k of (mean at a, k − mean at b, k).
import type { TreatmentInfo } from '../types.js';
import { ContrastDefinitionError, type ResolvedContrast } from './resolve.js';

/** The other factors' levels of a treatment, in words ("rate 40"); "" when there are none. */
function otherLevels(t: TreatmentInfo, factor: string): string {
  return Object.keys(t.levels)
    .filter((f) => f !== factor)
    .sort()
    .map((f) => `${f} ${t.levels[f] === null ? 'n/a' : String(t.levels[f])}`)
    .join(', ');
}

export function factorLevelsContrast(name: string, factor: string, a: string, b: string, treatments: readonly TreatmentInfo[], coefficients: Record<string, number>): ResolvedContrast {
  const at = (level: string): Map<string, TreatmentInfo[]> => {
    const byKey = new Map<string, TreatmentInfo[]>();
    for (const t of treatments) {
      const v = t.levels[factor];
      if (v === null || v === undefined || String(v) !== level) continue;
      const key = otherLevels(t, factor);
      byKey.set(key, [...(byKey.get(key) ?? []), t]);
    }
    return byKey;
  };
  const atA = at(a);
  const atB = at(b);
  if (atA.size === 0) throw new ContrastDefinitionError(name, `no treatment has ${factor} = ${a}`);
  if (atB.size === 0) throw new ContrastDefinitionError(name, `no treatment has ${factor} = ${b}`);
  const matched = [...atA.keys()].filter((k) => atB.has(k)).sort();
  if (matched.length === 0)
    throw new ContrastDefinitionError(
      name,
      `no combination of the other factors was tested at both ${factor} = ${a} (${[...atA.keys()].map(shown).join('; ')}) and ${factor} = ${b} (${[...atB.keys()].map(shown).join('; ')})`,
    );
  for (const key of matched) {
    const ta = atA.get(key) as TreatmentInfo[];
    const tb = atB.get(key) as TreatmentInfo[];
    for (const t of ta) coefficients[t.code] = 1 / ta.length;
    for (const t of tb) coefficients[t.code] = -1 / tb.length;
  }
  const unmatched = [...atA.keys(), ...atB.keys()].filter((k) => !matched.includes(k));
  const over = matched[0] === '' ? 'the treatments at each level' : `the ${matched.length} combination${matched.length > 1 ? 's' : ''} tested at both (${matched.join('; ')})`;
  return {
    name,
    kind: 'factor-levels',
    coefficients,
    divisor: matched.length,
    meaning:
      `mean at ${factor} = ${a} minus mean at ${factor} = ${b}, over ${over}` +
      (unmatched.length > 0 ? `; left out, tested at one level only: ${[...new Set(unmatched)].map(shown).join('; ')}` : ''),
  };
}

function shown(key: string): string {
  return key === '' ? 'no other factor' : key;
}
