// The shorter sections: the question asked, the one-stage check, diagnostics, cautions,
// provenance (enough to reproduce every number) and the per-trial appendix.
import type { CompactAnalysisReport } from '../../../api/analysis/report.js';
import { termDisplayName } from '../../text/termNames.js';
import { decimalsFromSe, esc, finite, num, table, type Section } from '../markup.js';
import { trialSummaries, type ReportInput } from '../reportInput.js';

export function questionSection(a: CompactAnalysisReport): Section {
  const items = a.twoStage.pooled.map((p) => `<li><b>${esc(p.name)}</b>: ${esc(p.meaning)}${a.contrastUnits[p.name] ? ` (in ${esc(a.contrastUnits[p.name])})` : ''}.</li>`);
  const rr = a.rateResponse;
  if (rr) items.push(`<li><b>Rate</b>: which rate of ${esc(rr.factor)} pays best at a price ratio of ${rr.priceRatio} ${esc(rr.yieldUnit ?? '')} per ${esc(rr.rateUnit ?? '')}, and how sure we can be of it.</li>`);
  return {
    id: 'question',
    title: 'The question',
    html: `<p>Does the practice change ${esc(a.trait)} across the network's sites and years, does the effect hold at a new site, and is it worth paying for? The analysis answers these through:</p><ul>${items.join('')}</ul><p>A response counts as profitable when it exceeds the break-even effect of ${num('settings.threshold', a.settings.threshold, 2)} ${esc(a.unit ?? '')}.</p>`,
  };
}

export function oneStageSection(a: CompactAnalysisReport): Section | null {
  const o = a.oneStage;
  if (!o) return null;
  const rows = o.contrasts.map((c, j) => {
    const d = decimalsFromSe(c.se);
    const k = `oneStage.contrasts.${j}`;
    const ag = a.agreement.find((x) => x.name === c.name);
    return [esc(c.name), `${num(`${k}.estimate`, c.estimate, d)} (${num(`${k}.lower`, c.lower, d)} to ${num(`${k}.upper`, c.upper, d)})`, num(`${k}.df`, c.df, 1), ag ? (ag.agree ? 'agrees' : '<b>differs</b>') + ` (${finite(ag.differenceInSe) ? Math.abs(ag.differenceInSe).toFixed(2) : '-'} SE)` : '-'];
  });
  const vc = Object.entries(o.variance)
    .filter(([, v]) => typeof v === 'number')
    .map(([name, v]) => [esc(termDisplayName(name)), num(`oneStage.variance.${name}`, v as number, 4)]);
  return {
    id: 'one-stage',
    title: 'The one-stage model as a check',
    html: `<p>The one-stage REML model ${o.converged ? 'converged' : '<b>did not converge</b>'} in ${o.iterations} iterations (−2 log-likelihood ${num('oneStage.minusTwoLogLik', o.minusTwoLogLik, 2)}).</p>${table(['Contrast', 'Estimate (interval)', 'df', 'Against the two-stage result'], rows)}<h3>Variance components</h3>${table(['Term', 'Variance'], vc, 'narrow')}${'residualByTrial' in o.variance ? '<p>The residual variance was estimated trial by trial (Appendix A gives each trial\'s residual SD).</p>' : ''}`,
  };
}

export function diagnosticsSection(a: CompactAnalysisReport): Section {
  const t = trialSummaries(a).map((x) => x.entry);
  const cvs = t.map((x) => x.anova.cv).filter(finite);
  const flagged = t.filter((x) => x.flags.length > 0);
  const outliers = t.filter((x) => finite(x.diagnostics.maxAbsStudentized) && x.diagnostics.maxAbsStudentized > x.diagnostics.outlierThreshold);
  const unequal = t.filter((x) => finite(x.diagnostics.unequalVariancesP) && x.diagnostics.unequalVariancesP < 0.01);
  const worstCv = [...t].sort((x, y) => (y.anova.cv ?? 0) - (x.anova.cv ?? 0)).slice(0, 5);
  return {
    id: 'diagnostics',
    title: 'Diagnostics',
    html: `<ul><li>Coefficient of variation of the trials: ${cvs.length ? `${Math.min(...cvs).toFixed(1)}% to ${Math.max(...cvs).toFixed(1)}%` : 'n/a'}; highest in ${worstCv.map((x) => `${esc(x.trial)} (${finite(x.anova.cv) ? x.anova.cv.toFixed(1) : '-'}%)`).join(', ')}.</li><li>Trials with at least one flag: ${flagged.length} of ${t.length}.</li><li>Trials with a plot beyond the outlier threshold: ${outliers.length}${outliers.length ? ` (${outliers.slice(0, 8).map((x) => esc(x.trial)).join(', ')}${outliers.length > 8 ? ', …' : ''})` : ''}.</li><li>Trials whose residual spread differs between treatments (p &lt; 0.01): ${unequal.length}.</li></ul><p>Each trial's residual checks (studentised residuals, leverage, Cook's distance, normal scores, row and column trends) are on its page in the app, or in <code>manyfield analyze --detail plots</code>.</p>${a.warnings.length ? `<h3>Warnings of the analysis</h3><ul>${a.warnings.map((w) => `<li>${esc(w)}</li>`).join('')}</ul>` : ''}`,
  };
}

export function cautionsSection(a: CompactAnalysisReport): Section {
  const base = [
    'These results summarise the trials in this workspace only: sites, seasons, soils and practices outside them may respond differently.',
    'Any rate taken from this report must respect the product label limits and local nutrient-management rules, and be confirmed by local agronomic advice.',
    'A prediction interval describes where the effect at a new site is expected to fall; it is not a guarantee for any one field.',
    'Prices change: the optimum and the profitable range depend on the price ratio used (see the price sensitivity table).',
  ];
  const extra = [...a.cautions, ...(a.rateResponse?.cautions ?? [])].filter((c) => !base.includes(c));
  return { id: 'cautions', title: 'Cautions', html: `<ul class="cautions">${[...base, ...new Set(extra)].map((c) => `<li>${esc(c)}</li>`).join('')}</ul>` };
}

export function provenanceSection(input: ReportInput): Section {
  const a = input.analysis;
  const pv = a.provenance;
  const spec = JSON.stringify(input.spec, null, 2);
  const imports = input.imports.map((f) => [esc(f.file), `<code>${esc(f.sha256)}</code>`, String(f.rowsStored), esc(f.createdAt)]);
  const saved = input.savedAnalysis
    ? `<p>Saved analysis #${input.savedAnalysis.id} (${esc(input.savedAnalysis.createdAt)}) was re-run for this report: its data fingerprint <code>${esc(input.savedAnalysis.fingerprint)}</code> ${input.savedAnalysis.fingerprint === pv.dataFingerprint ? '<b>matches</b> the data analysed now' : '<b>does not match</b> the data analysed now: the data changed since it was saved'}.</p>`
    : '';
  return {
    id: 'provenance',
    title: 'Provenance',
    html: `<table class="narrow keyvals"><tbody><tr><td>Program</td><td>Manyfield <span data-provenance="appVersion">${esc(pv.appVersion)}</span></td></tr><tr><td>Analysed</td><td>${esc(pv.createdAt)}</td></tr><tr><td>Report written</td><td>${esc(input.generatedAt)}</td></tr><tr><td>Source</td><td>${esc(input.sourceLabel)}</td></tr><tr><td>Data fingerprint (SHA-256 of the data analysed)</td><td><code data-provenance="dataFingerprint">${esc(pv.dataFingerprint)}</code></td></tr></tbody></table>${saved}<h3>Imported files</h3>${imports.length ? table(['File', 'SHA-256', 'Rows stored', 'Imported'], imports, 'hashes') : '<p>The data were read from a file, not a workspace.</p>'}<h3>The analysis spec</h3><p>Running <code>manyfield analyze --workspace WORKSPACE --spec spec.json --json</code> with this spec on the same workspace reproduces the fingerprint above and every number in this report.</p><pre class="spec" data-provenance="spec">${esc(spec)}</pre>`,
    newPage: true,
  };
}

export function appendixSection(a: CompactAnalysisReport): Section {
  const names = a.twoStage.pooled.map((p) => p.name);
  const rows = trialSummaries(a).map(({ entry: t, index }) => {
    const cells = names.map((n) => {
      const j = t.contrasts.findIndex((c) => c.name === n);
      const c = t.contrasts[j];
      if (!c) return '-';
      if (!c.estimable) return '<span class="na">not estimable</span>';
      const d = decimalsFromSe(c.se);
      return `${num(`twoStage.trials.${index}.contrasts.${j}.estimate`, c.estimate, d)} (${num(`twoStage.trials.${index}.contrasts.${j}.se`, c.se, d)})`;
    });
    return [esc(t.trial), esc(t.site ?? ''), esc(t.year ?? ''), esc(t.design), String(t.n), num(`twoStage.trials.${index}.anova.cv`, t.anova.cv, 1), String(t.flags.length), ...cells];
  });
  return {
    id: 'appendix',
    title: 'Appendix A: every trial',
    html: `<p>Per trial: plots used, coefficient of variation (%), flags raised, and each contrast's estimate with its standard error in brackets.</p>${table(['Trial', 'Site', 'Year', 'Design', 'Plots', 'CV %', 'Flags', ...names.map(esc)], rows, 'appendix')}`,
    newPage: true,
  };
}
