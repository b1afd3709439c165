// Page object: the Analysis screen (builder, run, contrasts, rates, saved analyses, comparison).
import type { Locator, Page } from 'playwright-core';

export class AnalysisPage {
  constructor(private readonly page: Page) {}

  async open(): Promise<void> {
    await this.page.getByRole('button', { name: 'Analysis', exact: true }).click();
    await this.page.getByTestId('spec-builder').waitFor();
  }

  tab(name: string | RegExp): Locator {
    return this.page.getByRole('tab', { name });
  }

  field(label: string): Locator {
    return this.page.getByLabel(label, { exact: true });
  }

  async fill(label: string, value: string | number): Promise<void> {
    await this.field(label).fill(String(value));
  }

  async choose(label: string, value: string): Promise<void> {
    await this.field(label).selectOption(value);
  }

  async addContrast(kind: 'Coefficient table' | 'Two levels of a factor' | 'Trend over a rate' | 'Treated against control'): Promise<void> {
    await this.page.getByRole('group', { name: 'Add a contrast' }).getByRole('button', { name: kind }).click();
  }

  card(n: number): Locator {
    return this.page.getByTestId('contrast-card').nth(n - 1);
  }

  specJson(): Promise<string> {
    return this.page.getByTestId('spec-json').textContent().then((t) => t ?? '');
  }

  /** Runs and waits for the results (the forest plot) or the rates. */
  async run(timeout = 400_000): Promise<void> {
    await this.page.getByRole('button', { name: 'Run the analysis' }).click();
    await this.page.getByTestId('run-progress').waitFor({ timeout: 30_000 }).catch(() => undefined);
    await this.page.getByRole('button', { name: 'Run the analysis' }).waitFor({ timeout });
  }

  forestRows(): Locator {
    return this.page.getByTestId('forest-row');
  }

  async forestTrials(): Promise<string[]> {
    // the elements are the page's; typed here without the DOM library
    return this.forestRows().evaluateAll((els) => els.map((e) => (e as unknown as { getAttribute(n: string): string | null }).getAttribute('data-trial') ?? ''));
  }

  /** Clicks a button and returns the download's name and text. */
  async download(button: string): Promise<{ name: string; text: string }> {
    const [d] = await Promise.all([this.page.waitForEvent('download'), this.page.getByRole('button', { name: button, exact: true }).click()]);
    const stream = await d.createReadStream();
    const parts: Buffer[] = [];
    for await (const chunk of stream) parts.push(chunk as Buffer);
    return { name: d.suggestedFilename(), text: Buffer.concat(parts).toString('utf8') };
  }

  async optimum(): Promise<number> {
    // the value arrives from the core a moment after the screen opens
    return Number(await this.attributeWhen(this.page.getByTestId('optimum-value'), 'data-value', (v) => v !== ''));
  }

  /**
   * Polls an attribute until it passes (the page's Content-Security-Policy forbids the string
   * evaluation page.waitForFunction would need).
   */
  async attributeWhen(locator: Locator, name: string, test: (value: string) => boolean, timeoutMs = 30_000): Promise<string> {
    const end = Date.now() + timeoutMs;
    for (;;) {
      const value = (await locator.getAttribute(name).catch(() => null)) ?? '';
      if (test(value)) return value;
      if (Date.now() > end) throw new Error(`attribute ${name} never passed its test (last "${value}")`);
      await this.page.waitForTimeout(50);
    }
  }
}
