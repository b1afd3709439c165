// The spread of the per-trial estimates of one contrast in a sentence, so that a network too
// large for every trial to be drawn is still described trial by trial in the body: lowest,
// quartiles, median, highest, and how many trials were positive or above the break-even. Each
// number is one trial's own estimate (order statistics: the median of an even count is the
// lower middle one), marked with that trial's JSON path like every other number.
import type { CompactAnalysisReport } from '../../../api/analysis/report.js';
import { esc, finite, num } from '../markup.js';
import { trialSummaries } from '../reportInput.js';

interface TrialValue {
  readonly key: string;
  readonly value: number;
  readonly trial: string;
}

export function trialSpreadSentence(a: CompactAnalysisReport, i: number, decimals: number): string {
  const name = a.twoStage.pooled[i].name;
  const values: TrialValue[] = [];
  for (const { entry, index } of trialSummaries(a)) {
    const j = entry.contrasts.findIndex((c) => c.name === name);
    const c = entry.contrasts[j];
    if (c && c.estimable && finite(c.estimate)) values.push({ key: `twoStage.trials.${index}.contrasts.${j}.estimate`, value: c.estimate, trial: entry.trial });
  }
  const n = values.length;
  if (n < 4) return '';
  values.sort((x, y) => x.value - y.value);
  const at = (q: number) => values[Math.floor(q * (n - 1))];
  const shown = (v: TrialValue) => num(v.key, v.value, decimals);
  const positive = values.filter((v) => v.value > 0).length;
  const t = a.settings.threshold;
  const above = t !== 0 ? values.filter((v) => v.value > t).length : null;
  const share = (m: number) => `${m.toLocaleString('en-GB')} of ${n.toLocaleString('en-GB')} (${Math.round((100 * m) / n)}%)`;
  return `<p class="trial-spread">The ${n.toLocaleString('en-GB')} trials' own estimates run from ${shown(values[0])} (${esc(values[0].trial)}) to ${shown(values[n - 1])} (${esc(values[n - 1].trial)}); half of them lie between ${shown(at(0.25))} and ${shown(at(0.75))}, around a median of ${shown(at(0.5))}. The effect was positive in ${share(positive)} trials${above !== null ? ` and above the break-even ${esc(t)} in ${share(above)}` : ''}. Single trials scatter more than the pooled estimate because each carries its own sampling error.</p>`;
}
