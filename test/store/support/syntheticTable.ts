// A generated ParsedPlotTable for store tests and the import benchmark: an augmented
// factorial (untreated control + 3 rates x 2 timings) in randomised complete blocks.
import { createHash } from 'node:crypto';
import type { FactorInfo, TreatmentInfo } from '../../../src/engine/types.js';
import type { ParsedObservation, ParsedPlot, ParsedPlotTable, ParsedTrial } from '../../../src/intake/types.js';
import { mulberry32 } from '../../../src/engine/stats/random.js';
import { EXAMPLE_TREATMENTS } from '../../support/exampleProtocol.js';

export const SYNTH_FACTORS: FactorInfo[] = [
  { name: 'rate', kind: 'numeric', unit: 'kg/ha' },
  { name: 'timing', kind: 'categorical' },
];

export const SYNTH_TREATMENTS: TreatmentInfo[] = EXAMPLE_TREATMENTS;

export interface SynthOptions {
  readonly trials: number;
  readonly seed?: number;
  /** Prefix of trial keys and site codes, so several tables can live in one workspace. */
  readonly prefix?: string;
  readonly blocks?: number;
  readonly file?: string;
  /** Replace the treatments (e.g. to provoke a level conflict). */
  readonly treatments?: TreatmentInfo[];
  readonly sites?: number;
}

export function syntheticTable(o: SynthOptions): ParsedPlotTable {
  const seed = o.seed ?? 1;
  const prefix = o.prefix ?? 'S';
  const blocks = o.blocks ?? 4;
  const treatments = o.treatments ?? SYNTH_TREATMENTS;
  const nSites = o.sites ?? Math.max(1, Math.ceil(o.trials / 3));
  const rand = mulberry32(seed);
  const trials: ParsedTrial[] = [];
  const plots: ParsedPlot[] = [];
  const observations: ParsedObservation[] = [];
  const trialCovariates: Record<string, Record<string, number | string | null>> = {};
  let sourceRow = 2;
  for (let k = 0; k < o.trials; k++) {
    const site = `${prefix}${String(k % nSites).padStart(3, '0')}`;
    const year = 2015 + Math.floor(k / nSites);
    const key = `${site}-${year}`;
    trials.push({ key, site, year, design: 'randomised-blocks' });
    trialCovariates[key] = { ph: Math.round((5.5 + 2 * rand()) * 100) / 100, previous_crop: rand() < 0.5 ? 'wheat' : 'canola' };
    const mean = 4 + 4 * rand();
    for (let b = 1; b <= blocks; b++) {
      for (const t of treatments) {
        const rate = typeof t.levels.rate === 'number' ? t.levels.rate : 0;
        const value = rand() < 0.01 ? null : Math.round((mean + rate / 100 + rand()) * 1000) / 1000;
        observations.push({ plot: plots.length, trait: 'yield', value });
        plots.push({ trialKey: key, treatment: t.code, block: String(b), row: b, col: plots.length % treatments.length + 1, sourceRow: sourceRow++ });
      }
    }
  }
  const sha256 = createHash('sha256').update(`synthetic:${seed}:${prefix}:${o.trials}:${blocks}:${JSON.stringify(treatments)}`).digest('hex');
  return {
    file: o.file ?? `${prefix}-${seed}.csv`,
    sha256,
    rowsRead: plots.length,
    protocol: 'synthetic',
    control: 'CTL',
    traits: [{ name: 'yield', unit: 't/ha', kind: 'continuous', lower: 0, upper: null }],
    factors: SYNTH_FACTORS,
    treatments,
    trials,
    plots,
    observations,
    trialCovariates,
    mapping: {
      columns: { site: 'site', year: 'year', trial: 'trial', block: 'block', treatment: 'treatment', response: 'yield', factors: { rate: 'rate', timing: 'timing' } },
      trait: { name: 'yield', unit: 't/ha' },
      control: 'CTL',
    },
  };
}
