// The report from the screens, in the browser mode: a saved analysis of the demo gets a Report
// button; clicking it re-runs the analysis in the server's worker (progress shown) and the page
// downloads the HTML and the PDF (the server prints with the system Chromium). The HTML's
// numbers equal `manyfield analyze --json` of the same spec (half a unit of the last decimal
// shown); the PDF has the sections and numbered contents (pdfinfo, pdftotext). A screenshot of
// the saved analyses with the outcome goes to test-output/screens/, with one of the pooled panel,
// whose chances are worded as the report words them.
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Download } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { contentsTitles, disagreements, markedNumbers } from '../support/reportNumbers.js';
import { openBrowser, screenshot, type OpenBrowser } from './support/browser.js';
import { PROJECT_ROOT, screensDir } from './support/paths.js';
import { callApi, startServer, type RunningServer } from './support/server.js';
import { AnalysisPage } from './pages/AnalysisPage.js';
import { StartPage } from './pages/StartPage.js';

let server: RunningServer;
let browser: OpenBrowser;
let ui: AnalysisPage;
let scratch: string;
const SPEC = join(PROJECT_ROOT, 'examples', 'demo-analysis.json');

beforeAll(async () => {
  scratch = mkdtempSync(join(tmpdir(), 'mf-report-e2e-'));
  server = await startServer();
  browser = await openBrowser();
  await new StartPage(browser.page).goto(server.url);
  await new StartPage(browser.page).openDemo();
  ui = new AnalysisPage(browser.page);
});

afterAll(async () => {
  await browser?.close();
  await server?.stop();
  rmSync(scratch, { recursive: true, force: true });
});

function demoPath(): string {
  const name = readdirSync(server.folder).find((f) => /demo.*\.manyfield$/.test(f));
  if (!name) throw new Error(`no demo workspace in ${server.folder}`);
  return join(server.folder, name);
}

async function saved(d: Download): Promise<{ name: string; file: string }> {
  const file = join(scratch, d.suggestedFilename());
  await d.saveAs(file);
  return { name: d.suggestedFilename(), file };
}

describe('the report from the saved analyses', () => {
  it('downloads the HTML and the PDF of a saved analysis, numbers equal to the analysis JSON', async () => {
    const spec = JSON.parse(readFileSync(SPEC, 'utf8')) as unknown;
    await callApi(server, 'analysis.run', { workspace: demoPath(), spec, save: true });
    await ui.open();
    await ui.tab(/^Saved/).click();
    const row = browser.page.getByTestId('saved-row').first();
    const id = Number(await row.getAttribute('data-id'));
    const downloads: Download[] = [];
    browser.page.on('download', (d) => downloads.push(d));
    await row.getByRole('button', { name: /^Write the report of/ }).click();
    await browser.page.getByTestId('report-progress').waitFor({ timeout: 30_000 });
    await screenshot(browser.page, join(screensDir(), 'report-writing.png'));
    const outcome = browser.page.getByTestId('report-outcome');
    await outcome.waitFor({ timeout: 400_000 });
    const said = await outcome.innerText();
    expect(said, said).toMatch(/Report written: .*\.html and .*\.pdf/);
    await screenshot(browser.page, join(screensDir(), 'report-written.png'));
    const files = await Promise.all(downloads.map(saved));
    expect(files.map((f) => f.name).sort()).toEqual([`yield-analysis-${id}-report.html`, `yield-analysis-${id}-report.pdf`]);

    const html = readFileSync(files.find((f) => f.name.endsWith('.html'))!.file, 'utf8');
    const specFile = join(scratch, 'spec.json');
    writeFileSync(specFile, JSON.stringify(spec));
    const command = JSON.parse(execFileSync(process.execPath, [join(PROJECT_ROOT, 'bin', 'manyfield.cjs'), 'analyze', '--workspace', demoPath(), '--spec', specFile, '--json', '--no-save'], { cwd: PROJECT_ROOT, maxBuffer: 1 << 28, stdio: ['ignore', 'pipe', 'ignore'] }).toString()) as { provenance: { dataFingerprint: string } };
    const marked = markedNumbers(html);
    expect(marked.length).toBeGreaterThan(300);
    expect(disagreements(marked, command)).toEqual([]);
    expect(html).toContain(command.provenance.dataFingerprint);
    expect(html).toMatch(new RegExp(`Saved analysis #${id} .*<b>matches</b>`));
    expect(contentsTitles(html)).toEqual(expect.arrayContaining(['1. In short', '5. Results by contrast', '6. Rate to recommend']));

    const pdf = files.find((f) => f.name.endsWith('.pdf'))!.file;
    const pages = Number(/Pages:\s+(\d+)/.exec(spawnSync('pdfinfo', [pdf], { encoding: 'utf8' }).stdout)![1]);
    expect(pages).toBeGreaterThanOrEqual(8);
    const first = spawnSync('pdftotext', ['-layout', '-f', '1', '-l', '1', pdf, '-'], { encoding: 'utf8' }).stdout;
    expect(first).toMatch(/Contents/);
    expect(first).toMatch(/5\. Results by contrast\s+\d+/);
    expect(browser.pageErrors).toEqual([]);
  });

  it('cancels a report being written and says so', async () => {
    await ui.tab(/^Saved/).click();
    const row = browser.page.getByTestId('saved-row').first();
    await row.getByRole('button', { name: /^Write the report of/ }).click();
    await browser.page.getByRole('button', { name: 'Cancel the report' }).click();
    const outcome = browser.page.getByTestId('report-outcome');
    await outcome.waitFor({ timeout: 30_000 });
    expect(await outcome.innerText()).toMatch(/cancelled/);
  });

  it('words the chances on the pooled panel as the report does (no rounded 100%)', async () => {
    await ui.tab(/^Saved/).click();
    await browser.page.getByTestId('saved-row').first().getByRole('button', { name: /^Open/ }).click();
    const summary = browser.page.getByTestId('pooled-summary');
    await summary.waitFor({ timeout: 60_000 });
    const text = await summary.innerText();
    // the report's rule: whole percent, "more than 99.5%" / "less than 0.5%" near the ends, and the
    // panel's figure and its sentence say the same
    const chance = /Chance of a positive response\s+(more than 99\.5%|less than 0\.5%|\d{1,2}%)/.exec(text);
    expect(chance).not.toBeNull();
    expect(text).toContain(`The chance of a positive response at a new site is ${chance![1]}`);
    expect(text).not.toMatch(/100(\.0)?%/);
    await screenshot(browser.page, join(screensDir(), 'report-pooled-wording.png'));
  });
});
