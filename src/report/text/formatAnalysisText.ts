// The text summary of an analysis, in the order a committee reads it: the headline per
// contrast, the treatment means, the pooled effects and their spread, the one-stage model,
// moderators, each trial, pairwise comparisons, the rate recommendation, then trial checks,
// warnings and cautions (each once). It restates the JSON's numbers and computes nothing new.
import type { AnyAnalysisReport } from '../../api/analysis/report.js';
import { headlineLines } from './headline.js';
import { meansLines } from './meansTable.js';
import { moderatorLines } from './moderatorsText.js';
import { noticeLines, trialCheckLines } from './noticesText.js';
import { oneStageLines } from './oneStageText.js';
import { pairwiseLines } from './pairwiseSummary.js';
import { pooledLines } from './pooledTables.js';
import { siteLevelLines } from './siteLevelsText.js';
import { siteYearLines } from './siteYearText.js';
import { recommendationLines } from './rateRecommendationText.js';
import { rateTrialLines } from './rateTrialsText.js';
import { trialEffectsLines } from './trialEffectsTable.js';
import { section } from './table.js';

export function formatAnalysisText(r: AnyAnalysisReport): string {
  const opening = `${r.trait}${r.unit ? ` (${r.unit})` : ''}: ${r.trialsAnalysed} trials analysed. Source ${r.provenance.source}, data ${r.provenance.dataFingerprint.slice(0, 12)}.`;
  const rate = r.rateResponse;
  const parts = [
    opening,
    ...section('In short', headlineLines(r)),
    ...(rate ? section('Rate to recommend', recommendationLines(rate)) : []),
    ...meansLines(r),
    ...pooledLines(r),
    ...siteLevelLines(r),
    ...oneStageLines(r),
    ...siteYearLines(r),
    ...moderatorLines(r),
    ...trialEffectsLines(r),
    ...pairwiseLines(r),
    ...(rate ? section('Response to rate in each trial', rateTrialLines(rate)) : []),
    ...trialCheckLines(r),
    ...noticeLines(r),
  ];
  return `${parts.join('\n')}\n`;
}
