// Trial checks, warnings and cautions, each printed once: warnings gather from every stage
// (the analysis, the one-stage model, the rate response and its mixed model) and repeat no
// text; cautions come once, from the analysis or else from the rate response.
import type { AnyAnalysisReport } from '../../api/analysis/report.js';
import { section } from './table.js';

/** Trial-check lines listed before the rest are counted. */
export const TRIAL_CHECKS_LISTED_MAX = 40;

export function allWarnings(r: AnyAnalysisReport): string[] {
  const found = [
    ...r.warnings,
    ...(r.oneStage?.warnings.map((w) => `one-stage model: ${w}`) ?? []),
    ...(r.rateResponse?.warnings.map((w) => `rate response: ${w}`) ?? []),
    ...(r.rateResponse?.mixedModel?.convergence.note ? [`rate response, mixed-model curve: ${r.rateResponse.mixedModel.convergence.note}`] : []),
  ];
  return [...new Set(found)];
}

export function allCautions(r: AnyAnalysisReport): string[] {
  const cautions = r.cautions.length > 0 ? r.cautions : (r.rateResponse?.cautions ?? []);
  return [...new Set(cautions)];
}

/** Trial flags worth reading; Cook's distance above 4/n marks plots in most trials, so those are counted. */
export function trialCheckLines(r: AnyAnalysisReport): string[] {
  const lines: string[] = [];
  let influential = 0;
  const influentialTrials = new Set<string>();
  for (const t of r.twoStage.trials) {
    if (!('flags' in t)) continue;
    // A trial summary counts its influential plots instead of flagging each.
    const counted = 'diagnostics' in t && 'influentialPlots' in t.diagnostics ? t.diagnostics.influentialPlots : 0;
    if (counted > 0) {
      influential += counted;
      influentialTrials.add(t.trial);
    }
    for (const f of t.flags) {
      if (f.code === 'influential-plot') {
        influential++;
        influentialTrials.add(t.trial);
      } else lines.push(`  ${t.trial}: ${f.message}`);
    }
  }
  const shown = lines.length > TRIAL_CHECKS_LISTED_MAX ? [...lines.slice(0, TRIAL_CHECKS_LISTED_MAX), `  ... and ${lines.length - TRIAL_CHECKS_LISTED_MAX} more (each trial's flags are in the JSON).`] : lines;
  if (influential > 0)
    shown.push(`  ${influential} plots in ${influentialTrials.size} trials have Cook's distance above 4/n (a loose screen; each is listed in the trial's detail: --json --detail plots).`);
  return section('Trial checks (nothing is dropped unless you exclude it with a reason)', shown);
}

export function noticeLines(r: AnyAnalysisReport): string[] {
  return [
    ...section('Warnings', allWarnings(r).map((w) => `  - ${w}`)),
    ...section('Cautions', allCautions(r).map((c) => `  - ${c}`)),
  ];
}
