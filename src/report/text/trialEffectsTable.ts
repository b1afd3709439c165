// Each trial's own effects (the trial stage), its CV and its flags. With many trials the table
// shows the trials a committee must look at — the most extreme effects, the highest CVs and
// every flagged trial — and counts the rest; every trial is in the JSON.
import type { AnyAnalysisReport, TrialStageEntry } from '../../api/analysis/report.js';
import type { TrialContrast } from '../../engine/trial/types.js';
import { decimalsFromSe, fixed } from './numbers.js';
import { section, textTable } from './table.js';

/** Up to this many trials the table lists them all. */
export const FULL_TABLE_MAX_TRIALS = 50;
/** Trials listed at each end of the first contrast's effects when the table is summarised. */
export const EXTREMES_EACH_END = 5;
/**
 * A CV above this (in %) is flagged: field trials of yield usually run well under it (common
 * practice, no single source; a CV this high means the trial says little about any effect).
 */
export const HIGH_CV_PERCENT = 25;
/** Flagged trials listed beyond the extremes when summarised; the rest are counted by flag. */
export const FLAGGED_LISTED_MAX = 20;
/** Flags that put a trial in the summarised table; the others are only counted. */
const SERIOUS = new Set(['high CV', 'outlying plot', 'field trend', 'treatment absent', 'no error df', 'unequal variances']);

const FLAG_WORDS: Partial<Record<string, string>> = {
  'outlier-residual': 'outlying plot',
  'unequal-variances': 'unequal variances',
  'spatial-trend': 'field trend',
  'aliased-terms': 'terms not estimable',
  'missing-plots': 'missing plots',
  'excluded-plots': 'plots excluded',
  'log-offset-applied': 'log offset',
  'percent-boundary-adjusted': '0/100% adjusted',
  'treatment-absent': 'treatment absent',
  'no-error-df': 'no error df',
  'transform-unsuited': 'transform unsuited',
};

export function trialEffectsLines(r: AnyAnalysisReport): string[] {
  const trials = r.twoStage.trials.filter((t): t is TrialStageEntry => 'anova' in t);
  if (trials.length === 0) return [];
  const names = r.twoStage.pooled.map((p) => p.name);
  const decimals = Object.fromEntries(r.twoStage.pooled.map((p) => [p.name, decimalsFromSe(p.se)]));
  const header = ['trial', 'CV %', ...names.map((n) => `${n}${r.contrastUnits[n] ? ` (${r.contrastUnits[n]})` : ''}`), 'flags'];
  const row = (t: TrialStageEntry) => [
    t.trial,
    t.anova.cv === null ? '-' : fixed(t.anova.cv, 1),
    ...names.map((n) => contrastCell(t.contrasts.find((c) => c.name === n), decimals[n] ?? 3)),
    flagWords(t).join(', '),
  ];
  const highCv = trials.filter((t) => t.anova.cv !== null && t.anova.cv > HIGH_CV_PERCENT);
  const cvLine =
    highCv.length > 0
      ? `  ${highCv.length} trial(s) have a CV above ${HIGH_CV_PERCENT}%: ${highCv.map((t) => `${t.trial} (${fixed(t.anova.cv, 0)}%)`).join(', ')}; their effects carry little weight in the pooling but deserve a look at the field records.`
      : '';
  const title = `Each trial's own effects (trial stage; effect with its ${Math.round(r.settings.confidence * 100)}% interval) and CV`;
  if (trials.length <= FULL_TABLE_MAX_TRIALS) return section(title, [textTable(header, trials.map(row)), cvLine]);
  const shown = summarisedTrials(trials, names[0]);
  const cvs = trials.map((t) => t.anova.cv).filter((c): c is number => c !== null).sort((a, b) => a - b);
  return section(`${title}: ${shown.length} of ${trials.length} trials shown`, [
    `  Shown: the ${EXTREMES_EACH_END} lowest and ${EXTREMES_EACH_END} highest ${names[0] ?? 'effects'}, the ${EXTREMES_EACH_END} highest CVs and up to ${FLAGGED_LISTED_MAX} trials with a CV above ${HIGH_CV_PERCENT}%, an outlying plot, a field trend, unequal variances or a treatment absent; all ${trials.length} are in the JSON.`,
    `  Flags over all trials: ${flagCounts(trials)}.`,
    cvs.length > 0 ? `  CV over all trials: median ${fixed(cvs[Math.floor((cvs.length - 1) / 2)], 1)}%, range ${fixed(cvs[0], 1)}% to ${fixed(cvs[cvs.length - 1], 1)}%.` : '',
    textTable(header, shown.map(row)),
    cvLine,
  ]);
}

function contrastCell(c: TrialContrast | undefined, decimals: number): string {
  if (!c) return '-';
  if (!c.estimable) return 'not estimable';
  return `${fixed(c.estimate, decimals)} (${fixed(c.lower, decimals)} to ${fixed(c.upper, decimals)})`;
}

/** Flags in words; influential plots (Cook's distance) are counted in the trial checks instead. */
function flagWords(t: TrialStageEntry): string[] {
  const words = new Set<string>();
  if (t.anova.cv !== null && t.anova.cv > HIGH_CV_PERCENT) words.add('high CV');
  for (const f of t.flags) if (f.code !== 'influential-plot') words.add(FLAG_WORDS[f.code] ?? f.code);
  return [...words];
}

function summarisedTrials(trials: readonly TrialStageEntry[], first: string | undefined): TrialStageEntry[] {
  const pick = new Set<TrialStageEntry>();
  const effect = (t: TrialStageEntry) => {
    const c = t.contrasts.find((x) => x.name === first);
    return c && c.estimable ? c.estimate : null;
  };
  const withEffect = trials.filter((t) => effect(t) !== null).sort((a, b) => (effect(a) as number) - (effect(b) as number));
  withEffect.slice(0, EXTREMES_EACH_END).forEach((t) => pick.add(t));
  withEffect.slice(-EXTREMES_EACH_END).forEach((t) => pick.add(t));
  [...trials].filter((t) => t.anova.cv !== null).sort((a, b) => (b.anova.cv as number) - (a.anova.cv as number)).slice(0, EXTREMES_EACH_END).forEach((t) => pick.add(t));
  trials.filter((t) => !pick.has(t) && flagWords(t).some((w) => SERIOUS.has(w))).slice(0, FLAGGED_LISTED_MAX).forEach((t) => pick.add(t));
  return trials.filter((t) => pick.has(t));
}

function flagCounts(trials: readonly TrialStageEntry[]): string {
  const counts = new Map<string, number>();
  for (const t of trials) for (const w of flagWords(t)) counts.set(w, (counts.get(w) ?? 0) + 1);
  return counts.size === 0 ? 'none' : [...counts].sort((a, b) => b[1] - a[1]).map(([w, n]) => `${w} ${n}`).join(', ');
}
