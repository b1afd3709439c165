// An invented nitrogen network as a new user would bring it: sites x years, a control plus
// three rates at two timings in four blocks, the field's own plot labels (block x 100 + plot),
// seasonal rainfall per trial, and — when asked — empty cells and one decimal slip. Invented data
// for tests of the command's behaviour; no engine number is checked against it.
import { writeFileSync } from 'node:fs';

export const CODES: readonly (readonly [string, number | '', string])[] = [
  ['CTL', 0, ''],
  ['A1', 40, 'early'],
  ['A2', 80, 'early'],
  ['A4', 160, 'early'],
  ['B1', 40, 'late'],
  ['B2', 80, 'late'],
  ['B4', 160, 'late'],
];

export interface NetworkOptions {
  readonly sites?: readonly string[];
  readonly years?: readonly number[];
  readonly seed?: number;
  /** How the control's rate is written: "0" or a blank cell. */
  readonly controlRate?: '0' | '';
  /** Write the plot column (default true). */
  readonly plotColumn?: boolean;
  /** Plots (site, year, label) whose value is left empty. */
  readonly empty?: readonly { site: string; year: number; plot: string }[];
  /** A plot whose value is written ten times too large (81.0 for 8.10). */
  readonly slip?: { site: string; year: number; plot: string };
  /** Missing-value word for the empty cells (default ""). */
  readonly missingWord?: string;
}

export interface PlotLine {
  readonly site: string;
  readonly year: number;
  readonly plot: string;
  readonly treatment: string;
  /** The file row as a spreadsheet numbers it (header = 1). */
  readonly row: number;
}

/** A small seeded generator (mulberry32): the same options give the same file. */
function uniform(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export function nitrogenCsv(o: NetworkOptions = {}): { text: string; plots: PlotLine[] } {
  const sites = o.sites ?? ['S1', 'S2', 'S3', 'S4'];
  const years = o.years ?? [2023, 2024];
  const u = uniform(o.seed ?? 7);
  const normal = () => Math.sqrt(-2 * Math.log(u() + 1e-12)) * Math.cos(2 * Math.PI * u());
  const withPlot = o.plotColumn ?? true;
  const lines = [`site,year,block,${withPlot ? 'plot,' : ''}trt,rate,timing,rain,yield`];
  const plots: PlotLine[] = [];
  for (const site of sites) {
    for (const year of years) {
      const rain = Math.round(350 + 200 * u());
      const level = 6 + 2 * normal() * 0.3;
      for (let block = 1; block <= 4; block++) {
        // A shuffled order per block, as a randomised layout has.
        const order = [...CODES].sort(() => u() - 0.5);
        order.forEach(([code, rate, timing], k) => {
          const plot = String(block * 100 + k + 1);
          const x = Number(rate) * (timing === 'late' ? 1.1 : 1);
          let y = level + 2.5 * (1 - Math.exp(-0.012 * x)) + 0.15 * block + 0.35 * normal();
          const isSlip = o.slip && o.slip.site === site && o.slip.year === year && o.slip.plot === plot;
          if (isSlip) y = Number(y.toFixed(2)) * 10;
          const isEmpty = (o.empty ?? []).some((e) => e.site === site && e.year === year && e.plot === plot);
          const rateCell = code === 'CTL' ? (o.controlRate ?? '0') : String(rate);
          const value = isEmpty ? (o.missingWord ?? '') : y.toFixed(2);
          lines.push(`${site},${year},${block},${withPlot ? `${plot},` : ''}${code},${rateCell},${timing},${rain},${value}`);
          plots.push({ site, year, plot, treatment: code, row: lines.length });
        });
      }
    }
  }
  return { text: `${lines.join('\n')}\n`, plots };
}

export function writeNitrogenCsv(path: string, o: NetworkOptions = {}): PlotLine[] {
  const { text, plots } = nitrogenCsv(o);
  writeFileSync(path, text);
  return plots;
}

export function nitrogenMapping(extra: Record<string, unknown> = {}, plotColumn = true): Record<string, unknown> {
  return {
    columns: {
      site: 'site',
      year: 'year',
      block: 'block',
      ...(plotColumn ? { plot: 'plot' } : {}),
      treatment: 'trt',
      response: 'yield',
      factors: { rate: 'rate', timing: 'timing' },
      covariates: ['rain'],
    },
    trait: { name: 'yield', unit: 't/ha' },
    control: 'CTL',
    factorUnits: { rate: 'kg/ha' },
    crop: 'wheat',
    ...extra,
  };
}

/** The spec's columns for `analyze --data` on the same file. */
export function nitrogenColumns(plotColumn = true): Record<string, unknown> {
  return { site: 'site', year: 'year', block: 'block', ...(plotColumn ? { plot: 'plot' } : {}), treatment: 'trt', response: 'yield', factors: { rate: 'rate', timing: 'timing' }, covariates: ['rain'] };
}
