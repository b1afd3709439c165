// Generated networks shaped like the DESIGN §5 example: an untreated control plus 40/80/160 at
// two timings (7 treatments) in 4 blocks per trial, with trial, block, treatment-by-trial and
// residual noise, a yield response rising with rate and a small timing effect. Seeded, so every
// run writes the same file. Columns: site,year,env,block,trt,rate,timing,y; trials are site-years
// (eight years per site), so cumulative pooling runs in order of year.
import { mulberry32, normalSampler } from '../../src/engine/stats/random.js';
import { EXAMPLE_CONTRASTS, EXAMPLE_TREATMENTS } from '../../test/support/exampleProtocol.js';

export function exampleNetworkCsv(trials: number, seed: number): string {
  const uniform = mulberry32(seed);
  const normal = normalSampler(uniform);
  const lines = ['site,year,env,block,trt,rate,timing,y'];
  const sites = Math.max(1, Math.ceil(trials / 8));
  for (let i = 0; i < trials; i++) {
    const env = `E${String(i + 1).padStart(5, '0')}`;
    const site = `S${String(i % sites).padStart(4, '0')}`;
    const year = 2011 + Math.floor(i / sites);
    const uTrial = 1.2 * normal();
    const uBlock = [0, 1, 2, 3].map(() => 0.3 * normal());
    const uInt = EXAMPLE_TREATMENTS.map(() => 0.2 * normal());
    const sdE = 0.4 + 0.3 * uniform();
    for (let b = 0; b < 4; b++)
      EXAMPLE_TREATMENTS.forEach((t, j) => {
        const rate = Number(t.levels.rate);
        const mean = 6 + 2.2 * (1 - Math.exp(-rate / 70)) + (t.levels.timing === 'late' ? -0.15 : 0);
        const y = mean + uTrial + uBlock[b] + uInt[j] + sdE * normal();
        lines.push(`${site},${year},${env},B${b + 1},${t.code},${rate},${t.levels.timing ?? ''},${y.toFixed(4)}`);
      });
  }
  return `${lines.join('\n')}\n`;
}

/** The example spec of DESIGN §5 for these files, with the parts the bench switches on and off. */
export function exampleSpec(parts: { twoStage: boolean; oneStage: boolean; lrt: boolean; rateBootstrap?: number }): object {
  return {
    trait: 'y',
    columns: { site: 'site', year: 'year', trial: 'env', block: 'block', treatment: 'trt', response: 'y', factors: { rate: 'rate', timing: 'timing' } },
    control: 'CTL',
    transform: 'none',
    contrasts: EXAMPLE_CONTRASTS,
    oneStage: parts.oneStage ? { random: ['trial', 'block', 'treatment-by-trial'], residual: 'common', df: 'satterthwaite', lrt: parts.lrt, profile: false } : null,
    twoStage: parts.twoStage ? { tau2: 'reml', interval: 'hksj' } : null,
    moderators: [],
    threshold: 0,
    ...(parts.rateBootstrap !== undefined ? { rateResponse: { factor: 'rate', model: 'quadratic', priceRatio: 0.01, at: { timing: 'early' }, bootstrap: parts.rateBootstrap, seed: 7 } } : {}),
  };
}

/** The mapping that imports these files into a workspace (trait "y"). */
export const EXAMPLE_MAPPING = {
  columns: { site: 'site', year: 'year', trial: 'env', block: 'block', treatment: 'trt', response: 'y', factors: { rate: 'rate', timing: 'timing' } },
  trait: { name: 'y', unit: 't/ha' },
  control: 'CTL',
  factorUnits: { rate: 'kg/ha' },
};
