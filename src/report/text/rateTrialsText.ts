// The spread of site optima, each trial's optimum (summarised with many trials) and the
// optimum's sensitivity to the price ratio.
import type { RateResponseResult } from '../../engine/rate/types.js';
import { fixed, sig } from './numbers.js';
import { section, textTable } from './table.js';
import { FULL_TABLE_MAX_TRIALS, EXTREMES_EACH_END } from './trialEffectsTable.js';

const TRIAL_FLAG_WORDS: Record<string, string> = {
  'above-tested-range': 'held at highest tested rate',
  'below-tested-range': 'held at lowest tested rate',
  'no-input-pays': 'no input pays',
  'convex-curve': 'curve bends upwards',
  'not-converged': 'fit did not converge',
  'no-curve': 'no curve',
};

export function rateTrialLines(rr: RateResponseResult): string[] {
  const ru = rr.rateUnit ?? 'rate units';
  const yu = rr.yieldUnit ?? 'yield units';
  const s = rr.siteOptima;
  const spread = `Site optima (${s.n} trials, each held inside its tested rates): ${s.quantiles.map((q) => `${Math.round(q.p * 100)}% ${fixed(q.value, 1)}`).join(', ')} ${ru}; no input pays in ${s.shareNoInputPays === null ? '-' : `${Math.round(s.shareNoInputPays * 100)}%`} of trials.`;
  const capped = rr.trials.filter((t) => t.flags.includes('above-tested-range')).length;
  const cappedLine = capped > 0 ? `  ${capped} trial optimum(s) are held at the trial's highest tested rate (the curve still paid there): the real optimum of those trials is higher.` : '';
  const sorted = rr.trials.filter((t) => t.optimum !== null).sort((a, b) => (a.optimum as number) - (b.optimum as number));
  const failed = rr.trials.filter((t) => t.optimum === null || !t.converged);
  const listed =
    rr.trials.length <= FULL_TABLE_MAX_TRIALS ? rr.trials : [...new Set([...sorted.slice(0, EXTREMES_EACH_END), ...sorted.slice(-EXTREMES_EACH_END), ...failed])];
  const table = textTable(
    ['trial', 'curve', 'converged', `optimum (${ru})`, `gain (${yu})`, `net return (${yu})`, 'flags'],
    listed.map((t) => [t.trial, t.model ?? '-', t.converged ? 'yes' : 'NO', fixed(t.optimum, 1), sig(t.yieldGainAtOptimum, 3), sig(t.netReturnAtOptimum, 3), t.flags.map((f) => TRIAL_FLAG_WORDS[f] ?? f).join(', ')]),
  );
  const sensitivity = textTable(
    ['price ratio', 'x base', `optimum (${ru})`, `within ${sig(rr.recommendation.nearBest?.within ?? 0)} ${yu} of the best net return`, `net return (${yu})`, 'trials where no input pays'],
    rr.sensitivity.map((r) => [sig(r.priceRatio), String(r.multiplier), fixed(r.optimum, 1), `${fixed(r.profitableLower, 1)} to ${fixed(r.profitableUpper, 1)}`, sig(r.netReturnAtOptimum, 3), r.shareNoInputPays === null ? '-' : `${Math.round(r.shareNoInputPays * 100)}%`]),
  );
  return [
    spread,
    ...section(rr.trials.length <= FULL_TABLE_MAX_TRIALS ? 'Each trial\'s optimum' : `Each trial's optimum: the ${EXTREMES_EACH_END} lowest and highest and any that failed, of ${rr.trials.length} (all in the JSON)`, [table, cappedLine]),
    ...section('If the price ratio changes (pooled curve)', [sensitivity]),
    '',
    rr.unitNote,
  ];
}
