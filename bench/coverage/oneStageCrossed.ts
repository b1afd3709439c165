// Coverage of the crossed one-stage model's new-site-in-a-new-year prediction for a contrast, by
// simulation: the plug-in t interval and the bootstrap of the studentised prediction error on the
// trials' own estimates (the default), side by side, with a calibration line for P(above threshold).
// Run: npx tsx bench/coverage/oneStageCrossed.ts [replicates] [bootstrap refits]
// Each replicate: S sites x 4 years (every site every year), 5 treatments (CTL, T1..T4) in 3
// randomised blocks; plot = treatment mean + site (0.8²) + year (0.6²) + site-year (0.7²) + block
// (0.3²) + treatment-by-site + treatment-by-year + treatment-by-trial + residual (0.5²). The contrast
// T1 - CTL has within-trial SE² = 2 x 0.25 / 3; the three treatment-by variances are equal and
// set so that the contrast's between-environment variance (2 x their sum) is the share I² of
// itself plus that SE². All seven terms fitted by REML (no likelihood-ratio tests or profiles). A
// new site's true contrast in a new year is drawn from the generating model. Seeded.
import { fitCrossed } from '../../src/engine/onestage/crossed/fitCrossed.js';
import { withSiteYearNewSite } from '../../src/engine/onestage/crossed/siteYearNewSite.js';
import { CROSSED_TERMS } from '../../src/engine/onestage/crossed/terms.js';
import { resolveContrast } from '../../src/engine/contrasts/resolve.js';
import { mulberry32, normalSampler } from '../../src/engine/stats/random.js';
import type { NetworkInput, PlotObservation, TrialInput } from '../../src/engine/types.js';

const replicates = Number(process.argv[2] ?? 100);
const draws = Number(process.argv[3] ?? 300);
const YEARS = 4;
const BLOCKS = 3;
const codes = ['CTL', 'T1', 'T2', 'T3', 'T4'];
const means = [5, 5.6, 5.9, 6.1, 6.2];
const SD = { site: 0.8, year: 0.6, trial: 0.7, block: 0.3, residual: 0.5 };
const contrastSe2 = (2 * SD.residual ** 2) / BLOCKS;
const treatments = codes.map((code) => ({ code, levels: {} }));
const contrast = resolveContrast({ name: 'T1_vs_CTL', coefficients: { CTL: -1, T1: 1 }, divisor: 1 }, treatments);
const random = [...CROSSED_TERMS];
const plan: [number, number][] = [[10, 0], [10, 0.5], [10, 0.9], [6, 0.5]];

function network(normal: () => number, sites: number, sdTx: number): { net: NetworkInput; newSite: number } {
  const txYear = Array.from({ length: YEARS }, () => codes.map(() => sdTx * normal()));
  const yearEffect = Array.from({ length: YEARS }, () => SD.year * normal());
  const trials: TrialInput[] = [];
  for (let s = 0; s < sites; s++) {
    const siteEffect = SD.site * normal();
    const txSite = codes.map(() => sdTx * normal());
    for (let y = 0; y < YEARS; y++) {
      const trialEffect = SD.trial * normal();
      const txTrial = codes.map(() => sdTx * normal());
      const plots: PlotObservation[] = [];
      for (let b = 0; b < BLOCKS; b++) {
        const blockEffect = SD.block * normal();
        codes.forEach((code, j) =>
          plots.push({ treatment: code, block: `B${b + 1}`, row: null, col: null, value: means[j] + siteEffect + yearEffect[y] + trialEffect + blockEffect + txSite[j] + txYear[y][j] + txTrial[j] + SD.residual * normal() }),
        );
      }
      trials.push({ trial: `S${s}-${2015 + y}`, site: `S${s}`, year: 2015 + y, design: 'randomised-blocks', plots });
    }
  }
  // a new site in a new year: its own treatment-by-site, -by-year and -by-trial effects
  const fresh = () => sdTx * (normal() - normal());
  const newSite = means[1] - means[0] + fresh() + fresh() + fresh();
  return { net: { trait: 'y', factors: [], treatments, trials }, newSite };
}

interface Cell { sites: number; i2: number; plugIn: number; pivot: number; n: number }
const calibration = Array.from({ length: 5 }, () => [0, 0, 0]);
const cells: Cell[] = [];
const started = Date.now();
for (const [sites, i2] of plan) {
  const rand = mulberry32(7000 + 100 * sites + Math.round(100 * i2));
  const normal = normalSampler(rand);
  // 2 x 3 sdTx² = I² / (1 - I²) x SE²
  const sdTx = Math.sqrt(((i2 / (1 - i2)) * contrastSe2) / 6);
  const total = 6 * sdTx * sdTx;
  const cell: Cell = { sites, i2, plugIn: 0, pivot: 0, n: 0 };
  for (let r = 0; r < replicates; r++) {
    const { net, newSite } = network(normal, sites, sdTx);
    const threshold = means[1] - means[0] + (rand() * 4 - 2) * Math.sqrt(total + contrastSe2);
    const fit = fitCrossed(net, [contrast], { random, yearAsFixed: false, df: 'satterthwaite', confidence: 0.95, lrt: false, profile: false });
    const view = withSiteYearNewSite(fit, net, [contrast], { random, yearAsFixed: false, method: 'bootstrap-tau2', confidence: 0.95, threshold, draws, seed: r + 1 }).siteYearView;
    const p = view.contrasts[0].newSiteNewYear;
    if (!p || p.method !== 'bootstrap-pivot' || !p.plugInT) continue;
    cell.n++;
    if (p.plugInT.lower <= newSite && newSite <= p.plugInT.upper) cell.plugIn++;
    if (p.lower <= newSite && newSite <= p.upper) cell.pivot++;
    if (i2 > 0) {
      const stated = p.probAboveThreshold as number;
      const bin = calibration[Math.min(4, Math.floor(stated * 5))];
      bin[0]++;
      bin[1] += stated;
      if (newSite > threshold) bin[2]++;
    }
  }
  cells.push(cell);
  process.stderr.write(`  ${sites} sites, I² ${Math.round(100 * i2)}%: ${cell.n} replicates, ${((Date.now() - started) / 1000).toFixed(0)} s\n`);
}

const pct = (x: number, n: number) => `${((100 * x) / n).toFixed(1)}%`;
console.log(`New-site-in-a-new-year prediction, one-stage crossed model (sites x ${YEARS} years, 5 treatments, ${BLOCKS} blocks), contrast T1 - CTL, nominal 95%, ${replicates} replicates per cell (Monte Carlo SE about ${(100 * Math.sqrt((0.05 * 0.95) / replicates)).toFixed(1)} points), ${draws} bootstrap refits`);
console.log('sites    I²  plug-in-t  bootstrap-pivot');
for (const c of cells) console.log(`${String(c.sites).padStart(5)} ${`${Math.round(100 * c.i2)}%`.padStart(5)} ${pct(c.plugIn, c.n).padStart(10)} ${pct(c.pivot, c.n).padStart(16)}`);
console.log('\nCalibration of P(new site above the threshold), bootstrap-pivot, I² > 0 pooled: stated (mean in bin) vs share above');
for (let i = 0; i < 5; i++) {
  const [n, stated, above] = calibration[i];
  if (n > 0) console.log(`  ${(i / 5).toFixed(1)}-${((i + 1) / 5).toFixed(1)}  stated ${(stated / n).toFixed(3)}  share ${(above / n).toFixed(3)}  n ${n}`);
}
console.log(`(${((Date.now() - started) / 1000).toFixed(1)} s)`);
