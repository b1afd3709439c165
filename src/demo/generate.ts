// Draws the demo network from the stated model in scenario.ts with a fixed seed, as a
// validated plot table ready for the store, plus the true values that produced it.
import { createHash } from 'node:crypto';
import { mulberry32, normalSampler } from '../engine/stats/random.js';
import type { TrialDesign } from '../engine/types.js';
import type { ParsedObservation, ParsedPlot, ParsedPlotTable, ParsedTrial } from '../intake/types.js';
import { DEMO_MODEL as M, DEMO_PROTOCOL, DEMO_SEED, DEMO_SITES, DEMO_TREATMENTS, DEMO_YEARS, DEMO_NETWORK_NAME, SITE_YEAR_STREAM } from './scenario.js';

/** Which site-years get which layout and which real-world quirk. */
const LAYOUT: Readonly<Record<string, TrialDesign>> = {
  'FAR-2024': 'completely-randomised',
  'BRN-2023': 'row-column',
  'GLN-2024': 'row-column',
  'KEL-2025': 'row-column',
  'ASH-2025': 'row-column',
  'NTH-2023': 'row-column',
};
const MISSING_TREATMENT = { trial: 'DUN-2025', treatment: 'B4' };
const OUTLIER = { trial: 'JES-2024', treatment: 'A2', block: '3' };
const COLUMN_TREND_TRIAL = 'INC-2023';
const MISSING_PLOTS: readonly { trial: string; treatment: string; block: string }[] = [
  { trial: 'ELS-2023', treatment: 'CTL', block: '2' },
  { trial: 'CAL-2024', treatment: 'B1', block: '4' },
  { trial: 'HAR-2025', treatment: 'A4', block: '1' },
  { trial: 'MRW-2023', treatment: 'B2', block: '3' },
  { trial: 'LRK-2025', treatment: 'A1', block: '2' },
];

export interface DemoTrialTruth {
  readonly trial: string;
  readonly site: string;
  readonly year: number;
  readonly design: TrialDesign;
  readonly siteEffect: number;
  readonly yearEffect: number;
  readonly trialEffect: number;
  readonly gmax: number;
  readonly sigma: number;
  readonly rainfall: number;
  /** Noise-free mean of each treatment's plots in this trial (yield, t/ha), outlier excluded. */
  readonly expectedYield: Record<string, number>;
  readonly expectedProtein: Record<string, number>;
}

export interface DemoTruth {
  readonly network: string;
  readonly seed: number;
  readonly model: typeof M;
  readonly trials: readonly DemoTrialTruth[];
  /** Population-average yield gain over the control for each treatment (E over sites of gain). */
  readonly populationGain: Record<string, number>;
  /** The drawn year effects and treatment-by-site / treatment-by-year effects (t/ha), by year / site and treatment. */
  readonly siteYear: {
    readonly yearEffects: Record<string, number>;
    readonly treatmentBySite: Record<string, Record<string, number>>;
    readonly treatmentByYear: Record<string, Record<string, number>>;
  };
  readonly quirks: {
    readonly missingTreatment: typeof MISSING_TREATMENT;
    readonly outlier: typeof OUTLIER & { readonly shift: number };
    readonly columnTrend: { readonly trial: string; readonly perColumn: number };
    readonly missingPlots: typeof MISSING_PLOTS;
  };
}

export interface DemoNetwork {
  readonly table: ParsedPlotTable;
  readonly truth: DemoTruth;
}

export function generateDemoNetwork(seed = DEMO_SEED): DemoNetwork {
  const uniform = mulberry32(seed);
  const normal = normalSampler(uniform);
  const trials: ParsedTrial[] = [];
  const plots: ParsedPlot[] = [];
  const observations: ParsedObservation[] = [];
  const trialCovariates: Record<string, Record<string, number | string | null>> = {};
  const truths: DemoTrialTruth[] = [];
  const siteEffects = new Map(DEMO_SITES.map((s) => [s.code, M.siteSd * normal()]));
  const codes = DEMO_TREATMENTS.map((t) => t.code);
  const siteYearNormal = normalSampler(mulberry32((seed ^ SITE_YEAR_STREAM) >>> 0));
  const yearEffects = Object.fromEntries(DEMO_YEARS.map((y) => [String(y), M.yearSd * siteYearNormal()]));
  const treatmentBySite = Object.fromEntries(DEMO_SITES.map((s) => [s.code, Object.fromEntries(codes.map((c) => [c, M.treatmentBySiteSd * siteYearNormal()]))]));
  const treatmentByYear = Object.fromEntries(DEMO_YEARS.map((y) => [String(y), Object.fromEntries(codes.map((c) => [c, M.treatmentByYearSd * siteYearNormal()]))]));

  for (const year of DEMO_YEARS) {
    for (const site of DEMO_SITES) {
      const key = `${site.code}-${year}`;
      const design = LAYOUT[key] ?? 'randomised-blocks';
      const rainfall = Math.round(site.rainfallNormal * Math.exp(0.2 * normal()));
      const trialEffect = M.trialSd * normal();
      const gmax = Math.max(0.2, M.gmaxMean + (M.gmaxRain * (rainfall - 450)) / 100 + M.gmaxOm * (site.organicMatter - 2.5) + M.gmaxSd * normal());
      const sigma = M.sigmaMedian * Math.exp(M.sigmaLogSd * normal());
      const proteinTrial = M.proteinTrialSd * normal();
      const interaction = new Map(codes.map((c) => [c, M.treatmentByTrialSd * normal()]));
      const blockEffects = Array.from({ length: M.blocks }, () => M.blockSd * normal());
      const proteinBlocks = Array.from({ length: M.blocks }, () => M.proteinBlockSd * normal());
      const trend = key === COLUMN_TREND_TRIAL ? M.columnTrendPerColumn : 0;
      const present = codes.filter((c) => !(key === MISSING_TREATMENT.trial && c === MISSING_TREATMENT.treatment));
      const layout = layOut(design, present, M.blocks, uniform);
      const sumYield: Record<string, number> = {};
      const sumProtein: Record<string, number> = {};
      const count: Record<string, number> = {};
      const meanCol = (present.length + 1) / 2;
      for (const cell of layout) {
        const t = DEMO_TREATMENTS.find((d) => d.code === cell.treatment)!;
        const x = t.rate * (t.timing ? M.efficiency[t.timing] : 1);
        const blockIndex = cell.replicate - 1;
        const expectedYield =
          M.mu + siteEffects.get(site.code)! + yearEffects[String(year)] + trialEffect + blockEffects[blockIndex] + gmax * (1 - Math.exp(-M.curvature * x)) +
          treatmentBySite[site.code][t.code] + treatmentByYear[String(year)][t.code] + interaction.get(t.code)! + trend * (cell.col - meanCol);
        const expectedProtein = M.proteinBase + M.proteinSlope * x + proteinTrial + proteinBlocks[blockIndex];
        const block = design === 'completely-randomised' ? null : String(cell.replicate);
        const isOutlier = key === OUTLIER.trial && t.code === OUTLIER.treatment && block === OUTLIER.block;
        const isMissing = MISSING_PLOTS.some((m) => m.trial === key && m.treatment === t.code && m.block === block);
        let yieldValue: number | null = expectedYield + sigma * normal() + (isOutlier ? M.outlierShift : 0);
        let proteinValue: number | null = expectedProtein + M.proteinSigma * normal();
        if (isMissing) {
          yieldValue = null;
          proteinValue = null;
        }
        if (!isOutlier && !isMissing) {
          sumYield[t.code] = (sumYield[t.code] ?? 0) + expectedYield;
          sumProtein[t.code] = (sumProtein[t.code] ?? 0) + expectedProtein;
          count[t.code] = (count[t.code] ?? 0) + 1;
        }
        const plotIndex = plots.length;
        // The field's plot number: replicate row times 100 plus the plot's place in it (101, 102 ... 201 ...).
        plots.push({ trialKey: key, treatment: t.code, block, row: cell.row, col: cell.col, plotId: String(cell.row * 100 + cell.col), sourceRow: plotIndex + 2 });
        observations.push({ plot: plotIndex, trait: 'yield', value: round(yieldValue, 3) });
        observations.push({ plot: plotIndex, trait: 'protein', value: round(proteinValue, 2) });
      }
      trials.push({ key, site: site.code, year, design });
      // Seasonal rainfall belongs to the site-year; soil pH, organic matter and region are the
      // site's own and are stored with the site (the workspace merges them into each trial).
      trialCovariates[key] = { rainfall };
      truths.push({
        trial: key,
        site: site.code,
        year,
        design,
        siteEffect: siteEffects.get(site.code)!,
        yearEffect: yearEffects[String(year)],
        trialEffect,
        gmax,
        sigma,
        rainfall,
        expectedYield: Object.fromEntries(Object.keys(count).map((c) => [c, sumYield[c] / count[c]])),
        expectedProtein: Object.fromEntries(Object.keys(count).map((c) => [c, sumProtein[c] / count[c]])),
      });
    }
  }

  const meanGmax = truths.reduce((s, t) => s + t.gmax, 0) / truths.length;
  const populationGain = Object.fromEntries(
    DEMO_TREATMENTS.map((t) => [t.code, meanGmax * (1 - Math.exp(-M.curvature * t.rate * (t.timing ? M.efficiency[t.timing] : 1)))]),
  );
  const content = JSON.stringify({ seed, trials, plots, observations });
  const table: ParsedPlotTable = {
    file: 'demo:orrin-valley',
    sha256: createHash('sha256').update(content).digest('hex'),
    rowsRead: plots.length,
    protocol: DEMO_PROTOCOL,
    control: 'CTL',
    traits: [
      { name: 'yield', unit: 't/ha', kind: 'continuous', lower: 0, upper: null },
      { name: 'protein', unit: '%', kind: 'percent', lower: 0, upper: 100 },
    ],
    factors: [
      { name: 'rate', kind: 'numeric', unit: 'kg/ha' },
      { name: 'timing', kind: 'categorical' },
    ],
    treatments: DEMO_TREATMENTS.map((t) => ({ code: t.code, label: t.label, levels: { rate: t.rate, timing: t.timing } })),
    trials,
    plots,
    observations,
    trialCovariates,
    mapping: {
      columns: { site: 'site', year: 'year', trial: 'trial', block: 'block', treatment: 'treatment', response: 'yield', row: 'row', col: 'col', plot: 'plot', factors: { rate: 'rate', timing: 'timing' } },
      trait: { name: 'yield', unit: 't/ha' },
      control: 'CTL',
      factorUnits: { rate: 'kg/ha' },
      protocol: DEMO_PROTOCOL,
    },
  };
  return {
    table,
    truth: {
      network: DEMO_NETWORK_NAME,
      seed,
      model: M,
      trials: truths,
      populationGain,
      siteYear: { yearEffects, treatmentBySite, treatmentByYear },
      quirks: {
        missingTreatment: MISSING_TREATMENT,
        outlier: { ...OUTLIER, shift: M.outlierShift },
        columnTrend: { trial: COLUMN_TREND_TRIAL, perColumn: M.columnTrendPerColumn },
        missingPlots: MISSING_PLOTS,
      },
    },
  };
}

interface Cell {
  readonly treatment: string;
  readonly replicate: number;
  readonly row: number;
  readonly col: number;
}

/** Field layout: rows of plots, one row per replicate (the completely randomised trial shuffles all plots). */
function layOut(design: TrialDesign, treatments: readonly string[], replicates: number, uniform: () => number): Cell[] {
  const t = treatments.length;
  const cells: Cell[] = [];
  if (design === 'completely-randomised') {
    const all = shuffle(Array.from({ length: t * replicates }, (_, i) => ({ treatment: treatments[i % t], replicate: Math.floor(i / t) + 1 })), uniform);
    all.forEach((a, i) => cells.push({ ...a, row: Math.floor(i / t) + 1, col: (i % t) + 1 }));
    return cells;
  }
  if (design === 'row-column') {
    // Latinised rows: cyclic shifts of one random order, so each column holds distinct treatments.
    const base = shuffle([...treatments], uniform);
    const shifts = shuffle(Array.from({ length: t }, (_, i) => i), uniform).slice(0, replicates);
    shifts.forEach((s, r) => base.forEach((_, c) => cells.push({ treatment: base[(c + s) % t], replicate: r + 1, row: r + 1, col: c + 1 })));
    return cells;
  }
  for (let r = 0; r < replicates; r++) shuffle([...treatments], uniform).forEach((code, c) => cells.push({ treatment: code, replicate: r + 1, row: r + 1, col: c + 1 }));
  return cells;
}

function shuffle<T>(items: T[], uniform: () => number): T[] {
  for (let i = items.length - 1; i > 0; i--) {
    const j = Math.floor(uniform() * (i + 1));
    [items[i], items[j]] = [items[j], items[i]];
  }
  return items;
}

function round(v: number | null, digits: number): number | null {
  if (v === null) return null;
  const f = 10 ** digits;
  return Math.round(v * f) / f;
}
