// The recommendation report as one self-contained HTML file: no script, no network, charts as
// inline SVG drawn by the shared chart components. Every number from the analysis carries the
// JSON path it came from (data-key), so it can be checked against the analysis document.
import { esc, sectionHtml, type Section } from './markup.js';
import type { ReportCharts, ReportInput } from './reportInput.js';
import { REPORT_CSS } from './reportStyles.js';
import { dataSection } from './sections/dataSection.js';
import { methodsSection } from './sections/methodsSection.js';
import { appendixSection, cautionsSection, diagnosticsSection, oneStageSection, provenanceSection, questionSection } from './sections/otherSections.js';
import { rateSection } from './sections/rateSection.js';
import { resultsSection } from './sections/resultsSection.js';
import { contrastSentence, rateSentence } from './sections/summarySentences.js';

export function buildReportHtml(input: ReportInput, charts: ReportCharts): string {
  const a = input.analysis;
  const summary: Section = {
    id: 'summary',
    title: 'In short',
    html: `<div class="summary">${a.twoStage.pooled.map((_, i) => contrastSentence(a, i)).join('')}${rateSentence(a) ?? ''}</div>`,
  };
  const sections = [
    summary,
    questionSection(a),
    dataSection(input),
    methodsSection(a, input.spec),
    resultsSection(a, charts),
    rateSection(a, charts),
    oneStageSection(a),
    diagnosticsSection(a),
    cautionsSection(a),
    provenanceSection(input),
    appendixSection(a),
  ].filter((s): s is Section => s !== null);
  // The page slot stays empty on screen; the PDF printer fills it in (src/report/pdf/tocPages.ts).
  const toc = `<nav class="toc" id="contents"><h2>Contents</h2><ol>${sections.map((s, i) => `<li><a href="#${esc(s.id)}"><span class="toc-title">${i + 1}. ${esc(s.title)}</span><span class="toc-page" data-section="${esc(s.id)}"></span></a></li>`).join('')}</ol></nav>`;
  const title = `Recommendation report: ${a.trait}${a.unit ? ` (${a.unit})` : ''}`;
  return `<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'; img-src data:"><title>${esc(title)}</title><style>${REPORT_CSS}</style></head>
<body>
<header><h1>${esc(title)}</h1><p class="subtitle">${esc(input.sourceLabel)} · ${a.trialsAnalysed} trials · data fingerprint ${esc(a.provenance.dataFingerprint.slice(0, 12))} · written ${esc(input.generatedAt)}</p></header>
${toc}
${sections.map((s, i) => sectionHtml(s, i + 1)).join('\n')}
</body></html>
`;
}
