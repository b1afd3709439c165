// Random networks of sites run over several years with gaps (not every site every year) and
// some plots missing, for the crossed one-stage checks, the CLI test and the bench. Seeded.
import { mulberry32, normalSampler } from '../../../../../src/engine/stats/random.js';
import type { NetworkInput, PlotObservation, TrialInput } from '../../../../../src/engine/types.js';

export interface CrossedSettings {
  readonly seed: number;
  readonly sites: number;
  readonly years: number;
  /** Probability that a site is run in a given year (each site keeps at least one year). */
  readonly runProbability?: number;
  readonly treatments?: number;
  readonly blocks?: number;
  readonly missing?: number;
  readonly sd?: Partial<Record<'site' | 'year' | 'trial' | 'block' | 'treatment-by-site' | 'treatment-by-year' | 'treatment-by-trial' | 'residual', number>>;
  /** Each trial's residual sd is the residual sd times exp(spread x a standard normal) (default 0: one residual sd). */
  readonly residualSpread?: number;
}

export interface CrossedNetwork {
  readonly network: NetworkInput;
  /** site,year,env,block,trt,y with a header; missing plots left out. */
  readonly csv: string;
}

const DEFAULT_SD = { site: 0.8, year: 0.6, trial: 0.7, block: 0.3, 'treatment-by-site': 0.35, 'treatment-by-year': 0.25, 'treatment-by-trial': 0.3, residual: 0.5 };

export function simulateCrossed(s: CrossedSettings): CrossedNetwork {
  const uniform = mulberry32(s.seed);
  const normal = normalSampler(uniform);
  const sd = { ...DEFAULT_SD, ...s.sd };
  const nT = s.treatments ?? 5;
  const nB = s.blocks ?? 3;
  const codes = Array.from({ length: nT }, (_, j) => (j === 0 ? 'CTL' : `T${j}`));
  const effects = codes.map((_, j) => 5 + 0.3 * j + (j === 0 ? -0.5 : 0));
  const yearEffect = Array.from({ length: s.years }, () => sd.year * normal());
  const txYear = Array.from({ length: s.years }, () => codes.map(() => sd['treatment-by-year'] * normal()));
  const trials: TrialInput[] = [];
  const lines = ['site,year,env,block,trt,y'];
  for (let si = 0; si < s.sites; si++) {
    const site = `S${String(si + 1).padStart(3, '0')}`;
    const siteEffect = sd.site * normal();
    const txSite = codes.map(() => sd['treatment-by-site'] * normal());
    const run = Array.from({ length: s.years }, () => uniform() < (s.runProbability ?? 0.7));
    if (!run.some(Boolean)) run[Math.floor(uniform() * s.years)] = true;
    for (let yi = 0; yi < s.years; yi++) {
      if (!run[yi]) continue;
      const year = 2015 + yi;
      const env = `${site}-${year}`;
      const uTrial = sd.trial * normal();
      const uBlock = Array.from({ length: nB }, () => sd.block * normal());
      const uInt = codes.map(() => sd['treatment-by-trial'] * normal());
      const residualSd = s.residualSpread ? sd.residual * Math.exp(s.residualSpread * normal()) : sd.residual;
      const plots: PlotObservation[] = [];
      for (let b = 0; b < nB; b++)
        for (let j = 0; j < nT; j++) {
          const y = effects[j] + siteEffect + yearEffect[yi] + txSite[j] + txYear[yi][j] + uTrial + uBlock[b] + uInt[j] + residualSd * normal();
          const value = uniform() < (s.missing ?? 0.05) ? null : Math.round(y * 1e6) / 1e6;
          plots.push({ treatment: codes[j], block: `B${b + 1}`, row: null, col: null, value });
          if (value !== null) lines.push(`${site},${year},${env},B${b + 1},${codes[j]},${value}`);
        }
      trials.push({ trial: env, site, year, design: 'randomised-blocks', plots });
    }
  }
  const network: NetworkInput = { trait: 'yield', factors: [], treatments: codes.map((code) => ({ code, levels: {} })), control: 'CTL', trials };
  return { network, csv: lines.join('\n') + '\n' };
}
