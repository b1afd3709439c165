// Page numbers for the report's table of contents. Chromium cannot say on which page an element
// will print, so the printer prints once, reads the text of each page back (poppler's pdftotext)
// and looks for each section's heading line, then fills the numbers in and prints again. The
// contents lines end in a page number, so they never equal a heading line on its own.

export interface TocHeading {
  readonly id: string;
  /** The heading as printed: "3. Methods". */
  readonly text: string;
}

function unescapeHtml(s: string): string {
  return s.replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&quot;/g, '"').replace(/&#39;/g, "'").replace(/&amp;/g, '&');
}

const squash = (s: string): string => s.replace(/\s+/g, ' ').trim();

/** The numbered sections of the report's HTML, in order (each `<section id><h2>`). */
export function tocHeadings(html: string): TocHeading[] {
  return [...html.matchAll(/<section id="([^"]+)"[^>]*><h2>([^<]+)<\/h2>/g)].map((m) => ({ id: unescapeHtml(m[1]), text: squash(unescapeHtml(m[2])) }));
}

/**
 * The 1-based page on which each heading stands alone on a line, searching forward from the
 * page of the one before (sections print in order). A heading not found is left out.
 */
export function findSectionPages(pageTexts: readonly string[], headings: readonly TocHeading[]): Map<string, number> {
  const pages = new Map<string, number>();
  let from = 0;
  for (const h of headings) {
    for (let p = from; p < pageTexts.length; p++) {
      if (pageTexts[p].split('\n').some((line) => squash(line) === h.text)) {
        pages.set(h.id, p + 1);
        from = p;
        break;
      }
    }
  }
  return pages;
}

/** The HTML with each contents line's page slot filled (`page` gives the text for a section id). */
export function fillTocPages(html: string, page: (id: string) => string): string {
  return html.replace(/<span class="toc-page" data-section="([^"]+)"><\/span>/g, (_m, id: string) => `<span class="toc-page" data-section="${id}">${page(unescapeHtml(id))}</span>`);
}
