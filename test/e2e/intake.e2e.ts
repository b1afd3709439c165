// Intake in the browser mode: a file with errors is refused with every problem listed by row and
// column and the workspace unchanged; a good file imports and its trials appear in the network.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { callApi, startServer, type RunningServer } from './support/server.js';
import { openBrowser, screenshot, type OpenBrowser } from './support/browser.js';
import { screensDir } from './support/paths.js';
import { writeFileSync } from 'node:fs';
import { HEADER, plotRows, writeBadFile, writeGoodFile } from './support/files.js';
import { buildXlsx } from '../intake/xlsxBuilder.js';
import { StartPage } from './pages/StartPage.js';
import { NetworkPage } from './pages/NetworkPage.js';
import { IntakePage } from './pages/IntakePage.js';

let server: RunningServer;
let browser: OpenBrowser;
let demoPath: string;

interface Counts {
  sites: number;
  trials: number;
  plots: number;
  observations: number;
  importBatches: number;
}
const counts = async () => (await callApi<{ counts: Counts; exclusions: number }>(server, 'workspace.describe', { workspace: demoPath })).counts;

beforeAll(async () => {
  server = await startServer();
  browser = await openBrowser();
  const start = new StartPage(browser.page);
  await start.goto(server.url);
  await start.openDemo();
  demoPath = join(server.folder, 'demo.manyfield');
});

afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

describe('intake in the browser', () => {
  it('lists every problem of a bad file by row, column and value, and stores nothing', async () => {
    const { page } = browser;
    const before = await counts();
    expect(before.trials).toBe(42);
    const bad = join(server.folder, 'zel-trials-with-errors.csv');
    const expected = writeBadFile(bad);
    const intake = new IntakePage(page);
    await intake.show();
    await intake.chooseFile(bad);
    await intake.setControl('CTL');
    await intake.validate();
    const errors = await intake.errors();
    for (const e of expected) expect(errors, JSON.stringify(e)).toContainEqual(expect.objectContaining({ row: String(e.row), column: e.column }));
    expect(errors.find((e) => e.row === '6')?.value).toBe('eight');
    expect(await intake.importButton().isDisabled()).toBe(true);
    // The picture shows the mapping and the problems together (the file's first rows are above).
    await page.evaluate('document.getElementById("intake-mapping-title").scrollIntoView()');
    await screenshot(page, join(screensDir(), 'intake-with-errors.png'));
    expect(await counts()).toEqual(before);
  });

  it('imports a good file and shows its trials in the network', async () => {
    const { page } = browser;
    const before = await counts();
    const good = join(server.folder, 'zel-trials.csv');
    writeGoodFile(good);
    const intake = new IntakePage(page);
    await intake.chooseFile(good);
    await intake.validate();
    await page.getByTestId('validation-ok').waitFor();
    expect(await intake.importButton().isEnabled()).toBe(true);
    const outcome = await intake.importAndWait();
    expect(outcome).toMatch(/Imported 2 trials, 56 plots/);
    expect(await counts()).toMatchObject({ trials: before.trials + 2, plots: before.plots + 56, importBatches: before.importBatches + 1 });
    const network = new NetworkPage(page);
    await network.show();
    expect(await network.rowCount()).toBe(44);
    const labels = await network.trialLabels();
    expect(labels.filter((l) => l.includes('ZEL'))).toHaveLength(2);
    // A new trial opens; without recorded positions its plots are drawn one line per block.
    await network.openTrial(labels.find((l) => l.includes('ZEL')) as string);
    expect(await page.getByTestId('field-plot').count()).toBe(28);
    expect(await page.getByTestId('field-grid').innerText()).toContain('one line per block');
    await screenshot(page, join(screensDir(), 'trial-by-block.png'));
  });

  it('refuses the same file a second time, saying which trials are already there', async () => {
    const { page } = browser;
    const before = await counts();
    const intake = new IntakePage(page);
    await intake.show();
    await intake.chooseFile(join(server.folder, 'zel-trials.csv'));
    await intake.validate();
    const rules = (await intake.errors()).map((e) => e.rule);
    expect(rules).toContain('trial-exists');
    expect(await intake.importButton().isDisabled()).toBe(true);
    expect(await counts()).toEqual(before);
  });

  it('reads an Excel workbook from the sheet the user chooses', async () => {
    const { page } = browser;
    const book = join(server.folder, 'qrn-2026.xlsx');
    const plots = plotRows(['QRN'], [2026], 4);
    writeFileSync(
      book,
      buildXlsx([
        { name: 'Notes', rows: [['Trial notes'], ['Sown 12 April, harvested 3 December']] },
        { name: 'Plots 2026', rows: [HEADER, ...plots.map((r) => r.map((v, i) => (i === 1 || i === 2 || i === 4 || i === 6 ? Number(v) : v === '' ? null : v)))] },
      ]),
    );
    const intake = new IntakePage(page);
    await intake.show();
    await page.getByTestId('intake-file-input').setInputFiles(book);
    const sheet = page.getByLabel('Sheet');
    await sheet.waitFor();
    await sheet.selectOption('Plots 2026');
    await expect.poll(async () => page.getByTestId('intake-preview').locator('thead').innerText()).toContain('treatment');
    expect(await page.locator('select[data-role="treatment"]').inputValue()).toBe('treatment');
    await intake.validate();
    expect(await page.getByTestId('validation-ok').innerText()).toMatch(/1 trial at 1 site, 28 plots/);
  });

  it('raised no page errors and no Content-Security-Policy violations', () => {
    expect(browser.pageErrors).toEqual([]);
  });
});
