// The header and footer of every printed page of the report, shared by the command's Chromium
// (playwright-core) and the desktop shell's own print engine: the title, and "Page n of N".

const esc = (s: string) => s.replace(/[&<>]/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;' })[c] ?? c);

export function pageTemplates(title: string): { headerTemplate: string; footerTemplate: string } {
  return {
    headerTemplate: `<div style="font-size:7pt;color:#5b6470;width:100%;padding:0 14mm;">${esc(title)}</div>`,
    footerTemplate: '<div style="font-size:8pt;color:#5b6470;width:100%;text-align:center;">Page <span class="pageNumber"></span> of <span class="totalPages"></span></div>',
  };
}

/** Page margins in millimetres (A4). */
export const PAGE_MARGINS_MM = { top: 16, bottom: 16, left: 14, right: 14 } as const;

/**
 * Whether to write the PDF's structure tags (read by screen readers). Chromium tags every table
 * cell: at 4,000 trials the appendix makes the tagged file 19 MB against 0.9 MB untagged, and
 * doubles the print time, so a report whose HTML passes 1.5 MB (about 1,500 trials) is printed
 * untagged; its HTML stays the accessible version.
 */
export function tagPdf(html: string): boolean {
  return html.length <= 1.5e6;
}

/** The report's title from its HTML (the <title> element), for the page header. */
export function reportTitle(html: string): string {
  const m = /<title>([^<]*)<\/title>/.exec(html);
  return m ? m[1].replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&quot;/g, '"').replace(/&#39;/g, "'").replace(/&amp;/g, '&') : 'Recommendation report';
}
