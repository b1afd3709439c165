// The demo network in the browser mode: start, network, a trial's layout and residual checks,
// and excluding a plot with a reason (the ANOVA changes, the exclusion is listed everywhere).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { startServer, type RunningServer } from './support/server.js';
import { openBrowser, screenshot, type OpenBrowser } from './support/browser.js';
import { screensDir } from './support/paths.js';
import { StartPage } from './pages/StartPage.js';
import { NetworkPage } from './pages/NetworkPage.js';
import { TrialPage } from './pages/TrialPage.js';

let server: RunningServer;
let browser: OpenBrowser;

beforeAll(async () => {
  server = await startServer();
  browser = await openBrowser();
});

afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

describe('demo network in the browser', () => {
  it('opens the demo from the start screen and lists its 42 trials', async () => {
    const { page } = browser;
    const start = new StartPage(page);
    await start.goto(server.url);
    await screenshot(page, join(screensDir(), 'start.png'));
    // The page is one script file and one style sheet: nothing inline for the CSP to allow.
    const html = await (await fetch(`${server.origin}/`, { headers: { 'x-manyfield-token': server.token } })).text();
    expect(html).toMatch(/<script type="module" crossorigin src="\.\/assets\/[^"]+\.js"><\/script>/);
    expect(html).not.toMatch(/<script(?![^>]*\ssrc=)[^>]*>/);
    expect(html).not.toMatch(/\sstyle="/);
    await start.openDemo();
    const network = new NetworkPage(page);
    expect(await network.rowCount()).toBe(42);
    expect(await network.listedCount()).toBe(42);
    // 14 sites drawn from their coordinates on the plane.
    expect(await network.siteMarkers().count()).toBe(14);
    const labels = await network.trialLabels();
    expect(new Set(labels).size).toBe(42);
    // The demo's one protocol at every site: connected, each treatment in many trials, one rate range.
    await network.checks().first().waitFor();
    expect(await network.checks().allInnerTexts()).toEqual([
      'Every treatment was tested in at least two trials.',
      'Connected: every trial shares a treatment with the rest.',
      'rate 0–160 kg/ha in 42 trials',
    ]);
    await screenshot(page, join(screensDir(), 'network.png'));
  });

  it('opens a trial with its field grid, tables and residual charts', async () => {
    const { page } = browser;
    const network = new NetworkPage(page);
    const first = (await network.trialLabels())[0];
    await network.openTrial(first);
    const trial = new TrialPage(page);
    // 7 treatments in 4 blocks.
    expect(await trial.plots().count()).toBe(28);
    await page.getByTestId('anova-table').waitFor();
    await page.getByTestId('means-table').waitFor();
    await page.getByTestId('contrasts-table').waitFor();
    for (const id of ['diag-resid-fitted', 'diag-qq', 'diag-cooks', 'diag-rows', 'diag-cols']) {
      const chart = page.getByTestId(id);
      await chart.waitFor();
      // Each chart drew its points or bars (an empty SVG would pass a mere presence check).
      expect(await chart.locator('svg .recharts-scatter-symbol, svg .recharts-bar-rectangle').count(), id).toBeGreaterThan(0);
    }
    expect(await page.getByTestId('spatial-flag').innerText()).toMatch(/P /);
    // Colouring by residual changes the legend and the cells' colours, and keeps the text in them.
    const fills = async () => Promise.all((await trial.plots().locator('rect').all()).map((r) => r.getAttribute('fill')));
    const fillsBefore = await fills();
    expect(fillsBefore).toHaveLength(28);
    await page.getByRole('radio', { name: 'residual' }).check();
    expect(await page.getByTestId('field-grid').locator('.legend').textContent()).toMatch(/^Residual/);
    const fillsAfter = await fills();
    expect(fillsAfter).not.toEqual(fillsBefore);
    await page.getByRole('radio', { name: 'measured value' }).check();
    const firstPlot = await trial.plots().first().getAttribute('data-plot-id');
    await trial.selectPlot(firstPlot as string);
    await screenshot(page, join(screensDir(), 'trial.png'));
    await page.evaluate('document.getElementById("trial-analysis-title").scrollIntoView()');
    await screenshot(page, join(screensDir(), 'trial-tables.png'));
    await trial.diagnostics().scrollIntoViewIfNeeded();
    await screenshot(page, join(screensDir(), 'trial-checks.png'));
  });

  it('exports a chart as SVG and PNG and its numbers as CSV', async () => {
    const { page } = browser;
    const grab = async (button: string): Promise<{ name: string; bytes: Buffer }> => {
      const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: button, exact: true }).click()]);
      const stream = await download.createReadStream();
      const parts: Buffer[] = [];
      for await (const chunk of stream) parts.push(chunk as Buffer);
      return { name: download.suggestedFilename(), bytes: Buffer.concat(parts) };
    };
    const csv = await grab('Export the numbers of Field layout as CSV');
    expect(csv.name).toMatch(/^field-layout-.+\.csv$/);
    const lines = csv.bytes.toString('utf8').trim().split(/\r\n/);
    expect(lines[0]).toBe('plot,treatment,block,row,column,value,residual,excluded,reason');
    expect(lines).toHaveLength(29);
    const svg = await grab('Export Field layout as SVG');
    expect(svg.bytes.toString('utf8')).toMatch(/^<\?xml[^>]*>\s*<svg[^>]+xmlns="http:\/\/www.w3.org\/2000\/svg"/);
    expect(svg.bytes.toString('utf8')).toContain('excluded (crossed)');
    const png = await grab("Export Cook's distance as PNG");
    // PNG signature (ISO/IEC 15948): 89 50 4E 47 0D 0A 1A 0A.
    expect([...png.bytes.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
    expect(png.bytes.length).toBeGreaterThan(2000);
  });

  it('excludes a plot with a reason: the ANOVA changes and the exclusion is listed', async () => {
    const { page } = browser;
    const trial = new TrialPage(page);
    const plotId = (await trial.plots().nth(3).getAttribute('data-plot-id')) as string;
    await trial.plot(plotId).scrollIntoViewIfNeeded();
    const dfBefore = await trial.residualDf();
    const fBefore = await trial.treatmentF();
    await trial.selectPlot(plotId);
    await trial.exclude('Waterlogged corner after the March storm');
    await expect.poll(() => trial.residualDf()).toBe(dfBefore - 1);
    expect(await trial.treatmentF()).not.toBe(fBefore);
    expect(await trial.plot(plotId).getAttribute('data-state')).toBe('excluded');
    expect(await trial.exclusions().innerText()).toContain('Waterlogged corner after the March storm');
    expect(await page.getByTestId('plot-reason').innerText()).toContain('Waterlogged corner');

    // The network shows the excluded plot against its trial and in the workspace total.
    const title = await page.locator('#trial-title').innerText();
    const label = /Trial (\S+)/.exec(title)?.[1] as string;
    const network = new NetworkPage(page);
    await network.show();
    await network.rows().first().waitFor();
    const cells = await network.row(label).locator('td').allInnerTexts();
    expect(cells[8]).toBe('1');
    expect(await page.locator('.facts').innerText()).toContain('1 plot excluded');

    // Taking it back restores the residual df.
    await network.openTrial(label);
    await trial.selectPlot(plotId);
    await page.getByTestId('include-button').click();
    await page.getByTestId('exclude-button').waitFor();
    await expect.poll(() => trial.residualDf()).toBe(dfBefore);
  });

  it('raised no page errors and no Content-Security-Policy violations', () => {
    expect(browser.pageErrors).toEqual([]);
  });
});
