// The demo report end to end through the built command (run "npm run build" first): the HTML
// stands alone, every marked number equals the analysis JSON obtained by re-running the spec
// read back from the report itself (so the same run checks reproduction: same fingerprint, same
// numbers), and the PDF has the sections and page numbers (poppler's pdfinfo and pdftotext).
// Page images go to test-output/report/ for a person to look at. Tolerance: half a unit of the
// last decimal shown (plus 1e-12), for numbers that are rounded for reading.
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { disagreements, markedNumbers, unescapeHtml } from '../support/reportNumbers.js';

const ROOT = fileURLToPath(new URL('../..', import.meta.url));
const BIN = join(ROOT, 'bin', 'manyfield.cjs');
const OUT = join(ROOT, 'test-output', 'report');
const SPEC = join(ROOT, 'examples', 'demo-analysis.json');

function run(args: string[]): string {
  const r = spawnSync(process.execPath, [BIN, ...args], { encoding: 'utf8', timeout: 300_000, maxBuffer: 64 << 20 });
  if (r.status !== 0) throw new Error(`manyfield ${args[0]} failed (${r.status}): ${r.stderr}`);
  return r.stdout;
}

let dir: string;
let html: string;
let rerun: Record<string, unknown>;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'mf-report-'));
  mkdirSync(OUT, { recursive: true });
  for (const f of readdirSync(OUT)) rmSync(join(OUT, f), { force: true });
  const ws = join(dir, 'demo.manyfield');
  run(['demo', '--workspace', ws]);
  run(['report', '--workspace', ws, '--spec', SPEC, '--out', join(OUT, 'demo.html'), '--pdf', join(OUT, 'demo.pdf')]);
  html = readFileSync(join(OUT, 'demo.html'), 'utf8');
  // Reproduction: the spec as printed in the report, re-run on the same workspace.
  const spec = unescapeHtml(/<pre class="spec" data-provenance="spec">([\s\S]*?)<\/pre>/.exec(html)![1]);
  writeFileSync(join(dir, 'spec-from-report.json'), spec);
  rerun = JSON.parse(run(['analyze', '--workspace', ws, '--spec', join(dir, 'spec-from-report.json'), '--json', '--no-save']));
}, 600_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('the demo report (HTML)', () => {
  it('refers to nothing outside itself and runs no script', () => {
    expect(html).not.toMatch(/<script|<link|<iframe|<img|@import|url\(\s*['"]?(https?:|\/\/)/i);
    expect(html).not.toMatch(/(src|href)="(?!#)[^"]*"/i);
    const hosts = [...html.matchAll(/https?:\/\/[^\s"'<)]+/g)].map((m) => m[0]).filter((u) => u !== 'http://www.w3.org/2000/svg');
    expect(hosts).toEqual([]);
  });

  it('has forest plots for every contrast and the rate chart, inline', () => {
    const contrasts = (rerun.twoStage as { pooled: unknown[] }).pooled.length;
    expect(html.match(/data-testid="forest-plot"/g)).toHaveLength(contrasts);
    expect(html.match(/data-testid="rate-chart"/g)).toHaveLength(1);
  });

  it('reproduces the data fingerprint when the spec printed in it is re-run', () => {
    const fp = /data-provenance="dataFingerprint">([^<]+)</.exec(html)![1];
    expect(fp).toBe((rerun.provenance as { dataFingerprint: string }).dataFingerprint);
  });

  it('shows every marked number as in the analysis JSON of the re-run (half a unit of the last decimal shown)', () => {
    const marked = markedNumbers(html);
    expect(marked.length).toBeGreaterThan(300);
    expect(disagreements(marked, rerun)).toEqual([]);
  });
});

describe('the demo report (PDF)', () => {
  const pdf = () => join(OUT, 'demo.pdf');
  it('has several pages with page numbers and every section', () => {
    const info = spawnSync('pdfinfo', [pdf()], { encoding: 'utf8' });
    const pages = Number(/Pages:\s+(\d+)/.exec(info.stdout)![1]);
    expect(pages).toBeGreaterThanOrEqual(8);
    const text = spawnSync('pdftotext', ['-layout', pdf(), '-'], { encoding: 'utf8', maxBuffer: 64 << 20 }).stdout;
    for (const title of ['Contents', 'In short', 'The question', 'The data', 'Methods', 'Results by contrast', 'Rate to recommend', 'Diagnostics', 'Cautions', 'Provenance', 'Appendix A: every trial'])
      expect(text, title).toContain(title);
    expect(text).toContain(`Page 1 of ${pages}`);
    expect(text).toContain(`Page ${pages} of ${pages}`);
    expect(text).toContain('label limits');
  });

  it('numbers the contents with the page each section starts on (pdftotext page by page)', () => {
    const page = (n: number) => spawnSync('pdftotext', ['-layout', '-f', String(n), '-l', String(n), pdf(), '-'], { encoding: 'utf8' }).stdout;
    const lines = [...page(1).matchAll(/^\s*(\d+)\. (.+?)\s+(\d+)\s*$/gm)].map((m) => ({ heading: `${m[1]}. ${m[2].trim()}`, page: Number(m[3]) }));
    expect(lines.map((l) => l.heading)).toContain('1. In short');
    expect(lines.length).toBeGreaterThanOrEqual(10);
    const squash = (s: string) => s.replace(/\s+/g, ' ').trim();
    for (const l of lines) {
      const text = page(l.page).split('\n').map(squash);
      // On its page the heading stands alone on a line (the contents line has the number after it).
      expect(text, `${l.heading} on page ${l.page}`).toContain(l.heading);
    }
    // Pages never go back: the sections print in order.
    expect(lines.map((l) => l.page)).toEqual([...lines.map((l) => l.page)].sort((x, y) => x - y));
  });

  it('keeps each chart whole: its first text, last text and caption print on one page', () => {
    const pages = spawnSync('pdftotext', ['-layout', pdf(), '-'], { encoding: 'utf8', maxBuffer: 64 << 20 }).stdout.split('\f');
    const onOnePage = (parts: string[]) => pages.some((t) => parts.every((x) => t.includes(x)));
    const contrasts = (rerun.twoStage as { pooled: { name: string }[] }).pooled.map((p) => p.name);
    // forest plot: column header (top), pooled row and axis title (bottom), caption
    for (const name of contrasts) expect(onOnePage(['Site and year', 'Pooled (mean effect)', 'solid line at 0, dotted at break-even', `Forest plot for ${name}:`]), name).toBe(true);
    // rate chart: upper panel title, lower panel axis, caption
    expect(onOnePage(['Yield gain over the control', 'Net return of the pooled curve', 'Top: yield gain over the control'])).toBe(true);
  });

  it('saves page images for a person to look at', () => {
    spawnSync('pdftoppm', ['-r', '60', '-png', pdf(), join(OUT, 'page')]);
    expect(readdirSync(OUT).filter((f) => f.startsWith('page') && f.endsWith('.png')).length).toBeGreaterThanOrEqual(8);
  });
});
