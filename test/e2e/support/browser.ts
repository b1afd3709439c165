// The system Chromium driven by playwright-core: headless, no sandbox (CI containers), no GPU,
// no background traffic, a fresh profile per test file, a 1280×800 window.
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

export const CHROMIUM = process.env.MANYFIELD_CHROMIUM ?? '/usr/bin/chromium';

export interface OpenBrowser {
  readonly context: BrowserContext;
  readonly page: Page;
  /** Console errors and Content-Security-Policy violations seen by the page. */
  readonly pageErrors: string[];
  close(): Promise<void>;
}

/**
 * zoom 2 shows the page as at 200 % zoom in a 1280×800 window: a 640×400 CSS-pixel viewport drawn
 * at two device pixels per CSS pixel (screenshots stay 1280×800).
 */
export async function openBrowser(zoom: 1 | 2 = 1): Promise<OpenBrowser> {
  if (!existsSync(CHROMIUM)) throw new Error(`e2e: Chromium not found at ${CHROMIUM}; install it (apt-get install chromium) or set MANYFIELD_CHROMIUM to its path`);
  const profile = mkdtempSync(join(tmpdir(), 'manyfield-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking'],
    viewport: { width: 1280 / zoom, height: 800 / zoom },
    deviceScaleFactor: zoom,
    acceptDownloads: true,
  });
  const page = context.pages()[0] ?? (await context.newPage());
  const pageErrors: string[] = [];
  page.on('console', (m) => {
    if (m.type() === 'error') pageErrors.push(m.text());
  });
  page.on('pageerror', (e) => pageErrors.push(String(e)));
  return {
    context,
    page,
    pageErrors,
    close: async () => {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

export async function screenshot(page: Page, file: string): Promise<void> {
  await page.screenshot({ path: file, fullPage: false });
}
