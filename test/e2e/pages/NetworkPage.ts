// Page object: the Network screen.
import type { Locator, Page } from 'playwright-core';

export class NetworkPage {
  constructor(private readonly page: Page) {}

  get root(): Locator {
    return this.page.getByTestId('network-screen');
  }

  async show(): Promise<void> {
    await this.page.getByRole('navigation', { name: 'Screens' }).getByRole('button', { name: 'Network' }).click();
    await this.root.waitFor();
  }

  rows(): Locator {
    return this.page.getByTestId('trial-row');
  }

  /** Waits until the table has loaded at least one row, then counts the drawn rows. */
  async rowCount(): Promise<number> {
    await this.rows().first().waitFor();
    return this.rows().count();
  }

  /** The count in the table heading ("Trials (42)"). */
  async listedCount(): Promise<number> {
    const text = await this.page.locator('#trials-title .count').innerText();
    return Number(/\d+/.exec(text.replace(/,/g, ''))?.[0] ?? Number.NaN);
  }

  async trialLabels(): Promise<string[]> {
    return this.rows().locator('th').allInnerTexts();
  }

  /** The network checks beside the flags, one item per finding or tested range. */
  checks(): Locator {
    return this.page.getByTestId('network-checks').locator('li');
  }

  siteMarkers(): Locator {
    return this.page.getByTestId('site-map').locator('.site-marker');
  }

  row(label: string): Locator {
    return this.rows().filter({ has: this.page.getByRole('button', { name: `Open trial ${label}`, exact: true }) });
  }

  async openTrial(label: string): Promise<void> {
    await this.page.getByRole('button', { name: `Open trial ${label}`, exact: true }).click();
    await this.page.getByTestId('trial-screen').waitFor();
    await this.page.getByTestId('field-grid').waitFor();
  }
}
