// Page object: the Start screen.
import type { Page } from 'playwright-core';

export class StartPage {
  constructor(private readonly page: Page) {}

  async goto(url: string): Promise<void> {
    await this.page.goto(url);
    await this.page.getByTestId('start-screen').waitFor();
  }

  /** Builds (first time) and opens the demo; waits for the network screen. */
  async openDemo(): Promise<void> {
    await this.page.getByTestId('open-demo').click();
    await this.page.getByTestId('network-screen').waitFor({ timeout: 120_000 });
  }
}
