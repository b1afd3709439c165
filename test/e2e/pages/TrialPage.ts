// Page object: the Trial screen.
import type { Locator, Page } from 'playwright-core';

export class TrialPage {
  constructor(private readonly page: Page) {}

  get root(): Locator {
    return this.page.getByTestId('trial-screen');
  }

  plots(): Locator {
    return this.page.getByTestId('field-plot');
  }

  plot(id: string): Locator {
    return this.page.locator(`[data-testid="field-plot"][data-plot-id="${id}"]`);
  }

  async selectPlot(id: string): Promise<void> {
    await this.plot(id).click();
    await this.page.getByTestId('plot-record').getByRole('heading', { name: new RegExp(`^Plot `) }).waitFor();
  }

  /** Residual df of the ANOVA, the number that must fall by one when a plot is set aside. */
  async residualDf(): Promise<number> {
    return Number(await this.page.getByTestId('anova-residual-df').innerText());
  }

  async treatmentF(): Promise<string> {
    return this.page.getByTestId('anova-table').locator('tr[data-term="treatment"] [data-testid="anova-f"]').innerText();
  }

  async exclude(reason: string): Promise<void> {
    await this.page.getByTestId('exclude-reason').fill(reason);
    await this.page.getByTestId('exclude-button').click();
    await this.page.getByTestId('include-button').waitFor();
  }

  exclusions(): Locator {
    return this.page.getByTestId('exclusions-list');
  }

  diagnostics(): Locator {
    return this.page.getByTestId('diagnostics');
  }
}
