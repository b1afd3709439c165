// Prints the report twice so that its contents list carries page numbers: the first print has
// placeholders of the same width, its pages are read back with pdftotext, the second print has
// the numbers. Without pdftotext (poppler-utils) the report prints once, its contents unnumbered.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fillTocPages, findSectionPages, tocHeadings } from './tocPages.js';

export type PrintOnce = (html: string) => Promise<Uint8Array>;

export interface PrintedReport {
  readonly pdf: Uint8Array;
  /** Page of each section as written in the contents; empty when they could not be found. */
  readonly sectionPages: ReadonlyMap<string, number>;
}

/** The text of each page of a PDF (pdftotext), or null when poppler's pdftotext is not installed. */
export function pdfPageTexts(pdf: Uint8Array): string[] | null {
  const dir = mkdtempSync(join(tmpdir(), 'mf-toc-'));
  try {
    const file = join(dir, 'pass1.pdf');
    writeFileSync(file, pdf);
    const r = spawnSync(process.env.MANYFIELD_PDFTOTEXT ?? 'pdftotext', ['-layout', file, '-'], { encoding: 'utf8', maxBuffer: 256 << 20 });
    if (r.error || r.status !== 0) return null;
    const pages = r.stdout.split('\f');
    if (pages.length > 1 && pages[pages.length - 1].trim() === '') pages.pop();
    return pages;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

export async function printWithContentsPages(html: string, printOnce: PrintOnce): Promise<PrintedReport> {
  const headings = tocHeadings(html);
  const first = await printOnce(fillTocPages(html, () => '00'));
  const texts = pdfPageTexts(first);
  if (texts === null) return { pdf: await printOnce(html), sectionPages: new Map() };
  const pages = findSectionPages(texts, headings);
  return { pdf: await printOnce(fillTocPages(html, (id) => String(pages.get(id) ?? ''))), sectionPages: pages };
}
