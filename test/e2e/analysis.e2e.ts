// The analysis screens on the demo: the example spec built by hand in the builder (not loaded),
// run in the worker with progress; one forest row per trial with the contrast; sorting changes
// the order; the forest CSV equals `manyfield analyze --json` on the same spec number for number
// (exact: the same engine on the same data, printed at full precision); the rates screen's
// optimum equals the command's pooled optimum and moves with the price as the engine's own
// price-sensitivity table says (1e-9 relative); saving, reopening, renaming and comparing two
// analyses. Screenshots of the builder, the forest plot with its heterogeneity panel, the rates
// and the comparison go to test-output/screens/.
import { execFileSync } from 'node:child_process';
import { readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServer, type RunningServer } from './support/server.js';
import { openBrowser, screenshot, type OpenBrowser } from './support/browser.js';
import { PROJECT_ROOT, screensDir } from './support/paths.js';
import { StartPage } from './pages/StartPage.js';
import { AnalysisPage } from './pages/AnalysisPage.js';

let server: RunningServer;
let browser: OpenBrowser;
let ui: AnalysisPage;
let builtSpec: Record<string, unknown>;
let command: CliReport;

interface CliContrast {
  name: string;
  estimable?: boolean;
  estimate?: number;
  se?: number;
  df?: number;
  lower?: number;
  upper?: number;
}
interface CliReport {
  twoStage: { trials: { trial: string; site?: string; year?: number; contrasts: CliContrast[] }[]; pooled: { name: string; estimate: number; weights: { trial: string[]; share: number[] } | { trial: string; share: number }[] }[] };
  rateResponse: { pooled: { optimum: number }; priceRatio: number; sensitivity: { multiplier: number; optimum: number }[] };
}

beforeAll(async () => {
  server = await startServer();
  browser = await openBrowser();
  await new StartPage(browser.page).goto(server.url);
  await new StartPage(browser.page).openDemo();
  ui = new AnalysisPage(browser.page);
});

afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

function demoPath(): string {
  const name = readdirSync(server.folder).find((f) => /demo.*\.manyfield$/.test(f));
  if (!name) throw new Error(`no demo workspace in ${server.folder}`);
  return join(server.folder, name);
}

function close(a: number, b: number, rel = 1e-9) {
  expect(Math.abs(a - b)).toBeLessThanOrEqual(rel * Math.max(1, Math.abs(b)));
}

describe('analysis builder, results, rates and saved analyses', () => {
  it('builds the example spec by hand, with the contrast checks reacting as it is typed', async () => {
    await ui.open();
    await ui.addContrast('Coefficient table');
    await ui.fill('Contrast 1 name', 'treated_vs_control');
    for (const code of ['A1', 'A2', 'A4', 'B1', 'B2', 'B4']) await ui.fill(`Contrast 1 coefficient of ${code}`, 1);
    // six treated at +1 and the control still 0: the live check refuses it
    expect(await ui.card(1).getByTestId('contrast-problems').innerText()).toMatch(/sum to zero; they sum to 6/);
    await ui.fill('Contrast 1 coefficient of CTL', -6);
    await ui.fill('Contrast 1 divisor', 6);
    expect(await ui.card(1).getByTestId('zero-sum').innerText()).toMatch(/sums to zero/);
    expect(await ui.card(1).getByTestId('contrast-problems').count()).toBe(0);
    expect(await ui.card(1).getByTestId('contrast-words').innerText()).toMatch(/minus \(6×CTL\), divided by 6/);

    await ui.addContrast('Two levels of a factor');
    await ui.fill('Contrast 2 name', 'early_vs_late');
    await ui.choose('Contrast 2 factor', 'timing');
    await ui.choose('Contrast 2 first level', 'early');
    await ui.choose('Contrast 2 second level', 'late');

    await ui.addContrast('Trend over a rate');
    await ui.fill('Contrast 3 name', 'rate_linear');
    await ui.choose('Contrast 3 factor', 'timing');
    expect(await ui.card(3).getByTestId('contrast-problems').innerText()).toMatch(/numeric factor; timing is categorical/);
    await ui.choose('Contrast 3 factor', 'rate');
    await ui.choose('Contrast 3 degree', '1');
    expect(await ui.card(3).getByTestId('contrast-words').innerText()).toMatch(/Linear trend over rate on its real spacing/);

    await ui.choose('Residual variance', 'per-trial');
    await ui.field('Moderator rainfall').check();
    await ui.field('Moderator organic_matter').check();
    await ui.fill('Break-even threshold', 0.3);
    await ui.field('Fit rate responses').check();
    await ui.choose('Rate factor', 'rate');
    await ui.choose('Response curve', 'quadratic');
    await ui.choose('Rate curves at timing', 'early');
    await ui.fill('Input price', 1.2);
    await ui.fill('Crop price', 250);
    await ui.fill('Profitable within', 0.02);
    await ui.fill('Bootstrap resamples', 200);
    await ui.fill('Bootstrap seed', 7);
    await browser.page.evaluate('window.scrollTo(0, 0)');
    await screenshot(browser.page, join(screensDir(), 'analysis-builder.png'));

    await browser.page.getByText('The spec as JSON (what the command reads)').click();
    builtSpec = JSON.parse(await ui.specJson()) as Record<string, unknown>;
    const example = JSON.parse(readFileSync(join(PROJECT_ROOT, 'examples', 'demo-analysis.json'), 'utf8')) as Record<string, unknown>;
    const rate = builtSpec.rateResponse as { priceRatio: number };
    const exampleRate = example.rateResponse as { priceRatio: number };
    close(rate.priceRatio, exampleRate.priceRatio, 1e-12); // 1.2 / 250 in floating point
    expect({ ...builtSpec, rateResponse: { ...rate, priceRatio: 0 } }).toEqual({ ...example, rateResponse: { ...exampleRate, priceRatio: 0 } });
  });

  it('runs it with progress, draws one forest row per trial with the contrast, and sorts', async () => {
    await ui.run();
    await browser.page.getByTestId('forest-plot').waitFor();
    const specFile = join(server.folder, 'built-spec.json');
    writeFileSync(specFile, JSON.stringify(builtSpec));
    const out = execFileSync(process.execPath, [join(PROJECT_ROOT, 'bin', 'manyfield.cjs'), 'analyze', '--workspace', demoPath(), '--spec', specFile, '--json', '--no-save'], { cwd: PROJECT_ROOT, maxBuffer: 1 << 28, stdio: ['ignore', 'pipe', 'ignore'] });
    command = JSON.parse(out.toString('utf8')) as CliReport;
    const withContrast = command.twoStage.trials.filter((t) => t.contrasts.some((c) => c.name === 'treated_vs_control' && c.estimable !== false && typeof c.estimate === 'number'));
    expect(withContrast.length).toBeGreaterThan(10);
    expect(await ui.forestRows().count()).toBe(withContrast.length);
    expect(await ui.forestTrials()).toEqual(withContrast.map((t) => t.trial));

    await ui.choose('Sort trials by', 'estimate');
    const sorted = await ui.forestTrials();
    const estimateOf = new Map(withContrast.map((t) => [t.trial, t.contrasts.find((c) => c.name === 'treated_vs_control')?.estimate as number]));
    expect(sorted).not.toEqual(withContrast.map((t) => t.trial));
    const values = sorted.map((t) => estimateOf.get(t) as number);
    expect(values).toEqual([...values].sort((a, b) => a - b));

    await ui.forestRows().first().locator('text').first().hover();
    expect(await browser.page.getByTestId('forest-hover').innerText()).toContain(sorted[0]);
    await browser.page.getByTestId('heterogeneity').waitFor();
    expect(await browser.page.getByTestId('heterogeneity').innerText()).toMatch(/I²[\s\S]*real differences between site-years/);
    expect(await browser.page.getByTestId('pooled-summary').innerText()).toMatch(/new site/);
    await browser.page.getByTestId('forest-frame').scrollIntoViewIfNeeded();
    await browser.page.evaluate('window.scrollBy(0, -60)');
    await screenshot(browser.page, join(screensDir(), 'analysis-forest.png'));
    await browser.page.getByTestId('forest-pooled').scrollIntoViewIfNeeded();
    await browser.page.evaluate('window.scrollBy(0, 300)');
    await screenshot(browser.page, join(screensDir(), 'analysis-forest-pooled.png'));
  });

  it('exports the forest table as CSV with every number equal to the command output', async () => {
    const { name, text } = await ui.download('Export the numbers of Forest plot: treated_vs_control as CSV');
    expect(name).toMatch(/\.csv$/);
    const [head, ...lines] = text.trim().split(/\r\n/);
    expect(head).toBe('trial,site,year,estimate,se,df,lower,upper,weight_share');
    const pooled = command.twoStage.pooled.find((p) => p.name === 'treated_vs_control');
    if (!pooled) throw new Error('no pooled treated_vs_control in the command output');
    const weights = Array.isArray(pooled.weights) ? new Map(pooled.weights.map((w) => [w.trial, w.share])) : new Map(pooled.weights.trial.map((t, i) => [t, (pooled.weights as { share: number[] }).share[i]]));
    expect(lines.length).toBe(weights.size);
    for (const line of lines) {
      const [trial, , , estimate, se, df, lower, upper, share] = line.split(',');
      const c = command.twoStage.trials.find((t) => t.trial === trial)?.contrasts.find((x) => x.name === 'treated_vs_control');
      expect(c, trial).toBeDefined();
      expect(Number(estimate)).toBe(c?.estimate);
      expect(Number(se)).toBe(c?.se);
      expect(Number(df)).toBe(c?.df);
      expect(Number(lower)).toBe(c?.lower);
      expect(Number(upper)).toBe(c?.upper);
      expect(Number(share)).toBe(weights.get(trial));
    }
  });

  it('shows the command optimum on the rates screen and moves it with the price as the engine does', async () => {
    await ui.tab('Rates').click();
    await browser.page.getByTestId('rate-cautions').waitFor();
    close(await ui.optimum(), command.rateResponse.pooled.optimum);
    expect(await browser.page.getByTestId('rate-cautions').innerText()).toMatch(/label limits/);
    await browser.page.evaluate('window.scrollTo(0, 0)');
    await screenshot(browser.page, join(screensDir(), 'analysis-rates.png'));
    await browser.page.getByTestId('rate-curve').scrollIntoViewIfNeeded();
    await browser.page.evaluate('window.scrollBy(0, 200)');
    await screenshot(browser.page, join(screensDir(), 'analysis-rates-curves.png'));
    await browser.page.evaluate('window.scrollTo(0, 0)');
    const before = await ui.optimum();
    const doubled = command.rateResponse.sensitivity.find((r) => r.multiplier === 2);
    if (!doubled) throw new Error('no ×2 row in the price sensitivity');
    await ui.fill('Input price for the optimum', 2.4); // the input price doubled: ratio × 2
    await ui.attributeWhen(browser.page.getByTestId('optimum-value'), 'data-value', (v) => v !== '' && Number(v) !== before);
    const after = await ui.optimum();
    expect(after).toBeLessThan(before);
    close(after, doubled.optimum);
  });

  it('saves every run, renames, reopens without recomputing and compares two', async () => {
    await ui.tab('Builder').click();
    await ui.choose('tau² estimator', 'dl');
    await ui.fill('Break-even threshold', 0.5);
    await ui.field('Fit rate responses').uncheck();
    await browser.page.getByText('fit the one-stage model').click();
    await ui.run();
    await ui.tab(/^Saved/).click();
    const rows = browser.page.getByTestId('saved-row');
    expect(await rows.count()).toBe(2);
    const older = await rows.nth(1).getAttribute('data-id');
    await browser.page.getByRole('button', { name: `Rename Analysis ${older} of yield` }).click();
    await ui.fill(`New name for analysis ${older}`, 'Example spec, REML');
    await browser.page.getByRole('button', { name: 'Save name' }).click();
    await browser.page.getByText('Example spec, REML').waitFor();

    await browser.page.getByRole('button', { name: 'Open Example spec, REML' }).click();
    await browser.page.getByTestId('forest-plot').waitFor();
    expect(await ui.forestRows().count()).toBe(command.twoStage.pooled.length > 0 ? (await ui.forestTrials()).length : 0);
    expect(await ui.forestRows().count()).toBeGreaterThan(10);

    await ui.tab(/^Saved/).click();
    await browser.page.getByLabel('Compare Example spec, REML').check();
    await rows.nth(0).getByRole('checkbox').check();
    await browser.page.getByRole('button', { name: 'Compare the two ticked' }).click();
    const view = browser.page.getByTestId('compare-view');
    await view.waitFor();
    expect(await browser.page.getByTestId('compare-data').innerText()).toMatch(/Same data/);
    const spec = await browser.page.getByTestId('compare-spec').innerText();
    expect(spec).toMatch(/twoStage\.tau2[\s\S]*"reml"[\s\S]*"dl"/);
    expect(spec).toMatch(/threshold[\s\S]*0\.3[\s\S]*0\.5/);
    expect(await browser.page.getByTestId('compare-numbers').innerText()).toMatch(/treated_vs_control: pooled estimate/);
    await browser.page.evaluate('window.scrollTo(0, 0)');
    await screenshot(browser.page, join(screensDir(), 'analysis-compare.png'));
  });
});
