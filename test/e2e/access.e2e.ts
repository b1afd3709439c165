// Keyboard use and 200 % zoom: the screens work without a mouse, and at 200 % nothing makes the
// page scroll sideways (wide tables and charts scroll inside their own frames).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { startServer, type RunningServer } from './support/server.js';
import { openBrowser, screenshot, type OpenBrowser } from './support/browser.js';
import { screensDir } from './support/paths.js';
import { StartPage } from './pages/StartPage.js';
import { NetworkPage } from './pages/NetworkPage.js';
import { TrialPage } from './pages/TrialPage.js';
import { IntakePage } from './pages/IntakePage.js';

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

describe('keyboard', () => {
  it('opens the demo, narrows to a site, opens a trial and a plot record with keys only', async () => {
    const { page } = browser;
    await new StartPage(page).goto(server.url);
    await page.getByTestId('open-demo').focus();
    await page.keyboard.press('Enter');
    await page.getByTestId('network-screen').waitFor({ timeout: 120_000 });
    const network = new NetworkPage(page);
    expect(await network.rowCount()).toBe(42);

    // A site marker is a button: Enter narrows the table to that site's three trials.
    const marker = network.siteMarkers().filter({ hasText: 'KEL' });
    await marker.focus();
    await page.keyboard.press('Enter');
    await expect.poll(() => network.rowCount()).toBe(3);
    expect((await network.trialLabels()).every((l) => l.startsWith('KEL-'))).toBe(true);

    await page.getByRole('button', { name: 'Open trial KEL-2023', exact: true }).focus();
    await page.keyboard.press('Enter');
    const trial = new TrialPage(page);
    await trial.plots().first().waitFor();
    await trial.plots().nth(2).focus();
    await page.keyboard.press('Enter');
    // The record is headed by the field's own plot label (the demo numbers its plots 101, 102, ...).
    const label = await trial.plots().nth(2).getAttribute('data-plot-label');
    expect(label).toMatch(/^\d+$/);
    expect(await page.getByTestId('plot-record').getByRole('heading').innerText()).toBe(`Plot ${label}`);
    // Tab from the record's reason box reaches the exclude button (disabled until a reason is typed).
    await page.getByTestId('exclude-reason').focus();
    await page.keyboard.type('Trampled by stock');
    await page.keyboard.press('Tab');
    expect(await page.evaluate('document.activeElement && document.activeElement.getAttribute("data-testid")')).toBe('exclude-button');
  });
});

describe('a new workspace', () => {
  it('is made from the start screen and opens empty, ready for intake', async () => {
    const { page } = browser;
    await page.getByRole('navigation', { name: 'Screens' }).getByRole('button', { name: 'Start' }).click();
    await page.getByLabel(/^Name/).fill('potash-network');
    await page.getByRole('button', { name: 'Create', exact: true }).click();
    const network = page.getByTestId('network-screen');
    await network.waitFor();
    expect(await page.locator('#network-title').innerText()).toBe('potash-network');
    expect(await page.locator('.facts').innerText()).toMatch(/0\s+trials/);
    expect(await network.innerText()).toContain('No trials imported yet');
  });
});

describe('200 % zoom', () => {
  it('keeps every screen within the window width and saves what it looks like', async () => {
    const zoomed = await openBrowser(2);
    try {
      const { page } = zoomed;
      const fits = async () => page.evaluate('document.documentElement.scrollWidth <= window.innerWidth + 1');
      await new StartPage(page).goto(server.url);
      expect(await fits(), 'start').toBe(true);
      await new StartPage(page).openDemo();
      await new NetworkPage(page).rowCount();
      expect(await fits(), 'network').toBe(true);
      await screenshot(page, join(screensDir(), 'network-zoom200.png'));
      await new NetworkPage(page).openTrial('ASH-2023');
      await page.getByTestId('diagnostics').waitFor();
      expect(await fits(), 'trial').toBe(true);
      await screenshot(page, join(screensDir(), 'trial-zoom200.png'));
      await new IntakePage(page).show();
      expect(await fits(), 'intake').toBe(true);
    } finally {
      await zoomed.close();
    }
  });

  it('raised no page errors', () => {
    expect(browser.pageErrors).toEqual([]);
  });
});
