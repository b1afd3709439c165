// The economic optimum as a committee reads it: one recommended rate with its interval and the
// reason for the choice, the other optimum as a check, the rates whose net return is close to
// the best (saying how close), and interval ends held at a tested limit marked as such.
import type { RateResponseResult } from '../../engine/rate/types.js';
import type { RecommendedRate } from '../../engine/rate/recommendation.js';
import { fixed, sig } from './numbers.js';

const SOURCE_WORDS: Record<RecommendedRate['source'], string> = {
  'pooled-curve': 'the pooled curve (mean of the trials\' own curves)',
  'mixed-model-curve': 'the mixed-model population curve',
};

const FLAG_WORDS: Record<string, string> = {
  'above-tested-range': 'held at the highest rate tested in every trial (the curve still pays beyond it)',
  'below-tested-range': 'held at the lowest rate tested',
  'no-input-pays': 'no input pays at this price ratio',
  'convex-curve': 'the curve bends upwards: no interior optimum',
  'not-converged': 'the curve fit did not converge',
  'no-curve': 'no curve could be fitted',
};

export function recommendationLines(rr: RateResponseResult): string[] {
  const rec = rr.recommendation;
  const ru = rr.rateUnit ?? 'rate units';
  const yu = rr.yieldUnit ?? 'yield units';
  const at = rr.at ? ` at ${Object.entries(rr.at).map(([k, v]) => `${k} = ${v}`).join(', ')}` : ' (averaged over the other factors)';
  const out = [`Response to ${rr.factor}${at}: ${rr.model} curves; price ratio ${sig(rr.priceRatio)} ${yu} per ${ru}.`];
  const main = rec.recommended;
  out.push(`Recommended rate: ${rateWithInterval(main, ru)}, from ${SOURCE_WORDS[main.source]}.`);
  out.push(...markLines(main, ru));
  out.push(`  Why this one: ${rec.reason}.`);
  if (rec.nearBest) {
    const within = rec.nearBest.within;
    out.push(
      within > 0
        ? `  Rates whose mean net return is within ${sig(within)} ${yu} of the best: ${fixed(rec.nearBest.lower, 1)} to ${fixed(rec.nearBest.upper, 1)} ${ru} (profitableWithin = ${sig(within)}).`
        : `  Rates whose mean net return is within ${sig(within)} ${yu} of the best: only the optimum itself (set profitableWithin above 0 for a range).`,
    );
  }
  out.push(`  At the recommended rate (pooled curve): yield gain ${sig(rr.pooled.yieldGainAtOptimum, 3)} ${yu}, net return ${sig(rr.pooled.netReturnAtOptimum, 3)} ${yu} over no input.`);
  if (rec.check) {
    out.push(`Check: ${SOURCE_WORDS[rec.check.source]} gives ${rateWithInterval(rec.check, ru)}; ${rec.check.comparison}.`);
    out.push(...markLines(rec.check, ru));
  }
  return out;
}

function rateWithInterval(r: RecommendedRate, ru: string): string {
  const interval =
    r.lower !== null && r.upper !== null
      ? ` (${fixed(r.lower, 1)}${r.lowerAtTestedLimit ? ' [at the lowest tested rate]' : ''} to ${fixed(r.upper, 1)}${r.upperAtTestedLimit ? ' [capped at the highest tested rate]' : ''} ${ru}; ${r.intervalMethod})`
      : ` (no interval: ${r.intervalMethod})`;
  return `${fixed(r.rate, 1)} ${ru}${interval}`;
}

function markLines(r: RecommendedRate, ru: string): string[] {
  const out: string[] = [];
  if (r.upperAtTestedLimit)
    out.push(`  The interval's upper end is capped at the highest rate tested in every trial (${fixed(r.testedRange[1], 1)} ${ru}): the optimum is never sought beyond the tested rates, so the true upper limit may be higher.`);
  if (r.lowerAtTestedLimit) out.push(`  The interval's lower end sits at the lowest tested rate (${fixed(r.testedRange[0], 1)} ${ru}): the true lower limit may be lower.`);
  for (const f of r.flags) out.push(`  The rate is ${FLAG_WORDS[f] ?? f}.`);
  return out;
}
