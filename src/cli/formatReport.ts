// The plain-text summary of an analysis for the terminal: pooled contrasts with heterogeneity,
// the one-stage model, agreement, the rate response, warnings and cautions.
import type { AnyAnalysisReport } from '../api/analysis/report.js';
import { formatRateResponseText } from '../engine/rate/formatRateResponseText.js';
import { num, pValue, textTable } from './textTable.js';

export function formatReport(r: AnyAnalysisReport): string {
  const parts: string[] = [];
  parts.push(`Trait ${r.trait}${r.unit ? ` (${r.unit})` : ''}: ${r.trialsAnalysed} trials analysed. Source ${r.provenance.source}, data ${r.provenance.dataFingerprint.slice(0, 12)}.`);
  if (r.twoStage.pooled.length > 0) {
    parts.push('\nPooled across trials (two-stage, random effects)');
    parts.push(
      textTable(
        ['contrast', 'k', 'estimate', 'se', 'lower', 'upper', 'p', 'tau2', 'I2 %', 'new-site lower', 'new-site upper', 'P(>0)'],
        r.twoStage.pooled.map((p) => [
          p.name,
          String(p.k),
          num(p.estimate),
          num(p.se),
          num(p.lower),
          num(p.upper),
          pValue(p.p),
          num(p.tau2),
          num(p.I2 === null ? null : 100 * p.I2, 3),
          num(p.predictionLower),
          num(p.predictionUpper),
          num(p.probPositive, 3),
        ]),
      ),
    );
  }
  if (r.oneStage) {
    const o = r.oneStage;
    parts.push(`\nOne-stage mixed model (REML): log-likelihood ${num(o.logLik, 8)}, ${o.converged ? 'converged' : 'NOT converged'} in ${o.iterations} iterations`);
    const variance = Object.entries(o.variance).flatMap(([k, v]) =>
      typeof v === 'number' ? [[k, num(v)]] : v && typeof v === 'object' ? [[`${k} (${Object.keys(v).length} trials)`, `${num(Math.min(...Object.values(v as Record<string, number>)))} .. ${num(Math.max(...Object.values(v as Record<string, number>)))}`]] : [],
    );
    parts.push(textTable(['variance component', 'estimate'], variance));
    parts.push('');
    parts.push(textTable(['contrast', 'estimate', 'se', 'df', 'lower', 'upper', 'p'], o.contrasts.map((c) => [c.name, num(c.estimate), num(c.se), num(c.df, 4), num(c.lower), num(c.upper), pValue(c.p)])));
    if (o.covariates.length > 0) {
      parts.push('');
      parts.push(textTable(['covariate slope', 'estimate', 'se', 'df', 'lower', 'upper', 'p', 'means at'], o.covariates.map((c) => [c.name, num(c.estimate), num(c.se), num(c.df, 4), num(c.lower), num(c.upper), pValue(c.p), num(c.centre)])));
    }
  }
  if (r.agreement.length > 0) {
    parts.push('\nOne-stage vs two-stage');
    parts.push(textTable(['contrast', 'one-stage', 'two-stage', 'gap (SE)', 'agree'], r.agreement.map((a) => [a.name, num(a.oneStage), num(a.twoStage), num(a.differenceInSe, 2), a.agree === null ? '-' : a.agree ? 'yes' : 'NO'])));
  }
  parts.push(...formatTrialChecks(r));
  if (r.rateResponse) parts.push(`\n${formatRateResponseText(r.rateResponse)}`);
  if (r.warnings.length > 0) parts.push(`\nWarnings\n${r.warnings.map((w) => `  - ${w}`).join('\n')}`);
  if (r.cautions.length > 0) parts.push(`\nCautions\n${r.cautions.map((c) => `  - ${c}`).join('\n')}`);
  return `${parts.join('\n')}\n`;
}

/**
 * Trial flags worth reading on a terminal. Cook's distance above 4/n marks several plots in
 * most trials, so those are counted here and listed in full only in the JSON diagnostics.
 */
function formatTrialChecks(r: AnyAnalysisReport): string[] {
  const lines: string[] = [];
  let influential = 0;
  const influentialTrials = new Set<string>();
  for (const t of r.twoStage.trials) {
    if (!('flags' in t)) continue;
    // a trial summary counts its influential plots instead of flagging each
    const counted = 'n' in t ? t.diagnostics.influentialPlots : 0;
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
  if (influential > 0)
    lines.push(`  ${influential} plots in ${influentialTrials.size} trials have Cook's distance above 4/n (a loose screen; each is listed in the trial's detail: --json --detail plots).`);
  return lines.length > 0 ? ['\nTrial checks (nothing is dropped unless you exclude it with a reason)', ...lines] : [];
}
