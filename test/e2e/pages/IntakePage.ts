// Page object: the Intake screen.
import type { Locator, Page } from 'playwright-core';

export class IntakePage {
  constructor(private readonly page: Page) {}

  async show(): Promise<void> {
    await this.page.getByRole('navigation', { name: 'Screens' }).getByRole('button', { name: 'Intake' }).click();
    await this.page.getByTestId('intake-screen').waitFor();
  }

  /** Chooses a file in the page's file input and waits for its preview and the mapping form. */
  async chooseFile(path: string): Promise<void> {
    await this.page.getByTestId('intake-file-input').setInputFiles(path);
    await this.page.getByTestId('mapping-form').waitFor();
    await this.page.getByTestId('intake-preview').waitFor();
  }

  async setColumn(role: string, column: string): Promise<void> {
    await this.page.locator(`select[data-role="${role}"]`).selectOption(column);
  }

  async setControl(code: string): Promise<void> {
    await this.page.getByLabel('Control treatment code (optional)').fill(code);
  }

  async validate(): Promise<void> {
    await this.page.getByTestId('validate-button').click();
    await this.page.locator('[data-testid="import-errors"], [data-testid="validation-ok"]').first().waitFor({ timeout: 120_000 });
  }

  errorTable(): Locator {
    return this.page.getByTestId('import-errors');
  }

  errorRows(): Locator {
    return this.page.getByTestId('import-error-row');
  }

  async errors(): Promise<{ row: string; column: string; value: string; rule: string; message: string }[]> {
    const rows = await this.errorRows().all();
    const out = [];
    for (const r of rows) {
      const cells = await r.locator('td').allInnerTexts();
      out.push({ row: cells[0], column: cells[1], value: cells[2], rule: cells[3], message: cells[4] });
    }
    return out;
  }

  importButton(): Locator {
    return this.page.getByTestId('import-button');
  }

  progress(): Locator {
    return this.page.getByTestId('import-progress');
  }

  cancelButton(): Locator {
    return this.page.getByTestId('import-cancel');
  }

  outcome(): Locator {
    return this.page.getByTestId('import-outcome');
  }

  async importAndWait(): Promise<string> {
    await this.importButton().click();
    await this.outcome().waitFor({ timeout: 120_000 });
    return this.outcome().innerText();
  }
}
