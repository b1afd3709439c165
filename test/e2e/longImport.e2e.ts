// A 1,000-trial import in the browser mode: the page stays responsive while it runs, progress
// moves, and cancelling leaves the workspace as it was.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { callApi, startServer, type RunningServer } from './support/server.js';
import { openBrowser, type OpenBrowser } from './support/browser.js';
import { writeThousandTrials } from './support/files.js';
import { StartPage } from './pages/StartPage.js';
import { IntakePage } from './pages/IntakePage.js';

let server: RunningServer;
let browser: OpenBrowser;

beforeAll(async () => {
  server = await startServer();
  browser = await openBrowser();
  const start = new StartPage(browser.page);
  await start.goto(server.url);
  await start.openDemo();
});

afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

/** Milliseconds the page takes to answer a trivial script: stays small while the page is responsive. */
async function roundTrip(browserPage: OpenBrowser['page']): Promise<number> {
  const t = Date.now();
  await browserPage.evaluate(() => 1);
  return Date.now() - t;
}

describe('a long import', () => {
  it('shows moving progress, stays responsive, and a cancel stores nothing', async () => {
    const { page } = browser;
    const demo = join(server.folder, 'demo.manyfield');
    const describe0 = await callApi<{ counts: Record<string, number> }>(server, 'workspace.describe', { workspace: demo });
    const file = join(server.folder, 'thousand-trials.csv');
    expect(writeThousandTrials(file)).toBe(1000);

    const intake = new IntakePage(page);
    await intake.show();
    await intake.chooseFile(file);
    await intake.setControl('CTL');
    await intake.validate();
    await page.getByTestId('validation-ok').waitFor();
    expect(await page.getByTestId('validation-ok').innerText()).toContain('1000 trials');

    await intake.importButton().click();
    await intake.progress().waitFor();
    // Watch the progress until it has moved through at least two values, checking the page
    // answers promptly all the while (the import runs in the server's worker, not the page).
    const seen = new Set<string>();
    const answers: number[] = [];
    const deadline = Date.now() + 60_000;
    while (seen.size < 3 && Date.now() < deadline) {
      const f = await intake.progress().getAttribute('data-fraction').catch(() => null);
      if (f) seen.add(f);
      answers.push(await roundTrip(page));
      await page.waitForTimeout(40);
    }
    expect(seen.size, `progress values seen: ${[...seen].join(', ')}`).toBeGreaterThanOrEqual(3);
    // A responsive page answers a trivial script in well under half a second (common practice:
    // 100 ms is the usual bound for "instant"; 500 ms leaves room for a loaded CI machine).
    expect(Math.max(...answers)).toBeLessThan(500);
    // The controls still work: switching the grid colouring is not possible here, so use the
    // cancel button itself, which must answer while the import runs.
    await intake.cancelButton().click();
    const outcome = await intake.outcome().innerText();
    expect(outcome).toMatch(/cancelled/i);
    expect(outcome).toMatch(/Nothing was stored/);

    const describe1 = await callApi<{ counts: Record<string, number> }>(server, 'workspace.describe', { workspace: demo });
    expect(describe1.counts).toEqual(describe0.counts);
  });
});
