// Coverage of the new-site prediction of the site-level pools (trials nested in sites; and sites
// crossed with years), by simulation: the plug-in t interval and the bootstrap of the studentised
// prediction error (the default), with a calibration line for the new-site probabilities.
// Run: npx tsx bench/coverage/siteLevels.ts [replicates] [bootstrap draws] [crossed]
// Per replicate: S sites, each run in 1-4 years out of 6 (so not every site every year); trial SEs
// uniform on [0.2, 0.8]; the between-trial variance of true effects set so that it is the given
// share (I²) of itself plus the typical sampling variance, split half to the site and half to the
// trial within site (crossed: a third each to site, year and trial); REML. A new site's true
// effect (in a new year) is drawn from the generating model. Seeded: the same table every run.
import { poolSiteLevels } from '../../src/engine/pooling/multilevel/poolSiteLevels.js';
import type { SiteLevelItem } from '../../src/engine/pooling/multilevel/types.js';
import { mulberry32, normalSampler } from '../../src/engine/stats/random.js';

const replicates = Number(process.argv[2] ?? 400);
const draws = Number(process.argv[3] ?? 400);
const crossed = process.argv[4] === "crossed";
const siteCounts = [5, 10, 20];
const i2s = [0, 0.5, 0.9];
const YEARS = 6;
const mu = 1;
const typicalV = 0.25; // about the typical variance of SEs uniform on [0.2, 0.8]

interface Cell { sites: number; i2: number; plugIn: number; pivot: number; n: number; calibration: number[][] }

const started = Date.now();
// the crossed model's own fit (nested searches, about a second each) limits its simulation to five cells
const plan = crossed ? [[10, 0], [10, 0.5], [10, 0.9], [5, 0.5], [20, 0.5]] : siteCounts.flatMap((s) => i2s.map((i) => [s, i]));
const cells: Cell[] = [];
for (const [sites, i2] of plan) {
  const rand = mulberry32(1000 * sites + Math.round(100 * i2) + (crossed ? 7 : 0));
  const normal = normalSampler(rand);
  const between = (i2 / (1 - i2)) * typicalV;
  const parts = crossed ? { site: between / 3, year: between / 3, trial: between / 3 } : { site: between / 2, year: 0, trial: between / 2 };
  const cell: Cell = { sites, i2, plugIn: 0, pivot: 0, n: 0, calibration: Array.from({ length: 5 }, () => [0, 0, 0]) };
  for (let r = 0; r < replicates; r++) {
    const yearEffect = Array.from({ length: YEARS }, () => Math.sqrt(parts.year) * normal());
    const items: SiteLevelItem[] = [];
    for (let s = 0; s < sites; s++) {
      const siteEffect = Math.sqrt(parts.site) * normal();
      const runs = 1 + Math.floor(rand() * 4);
      const start = Math.floor(rand() * (YEARS - runs + 1));
      for (let y = start; y < start + runs; y++) {
        const se = 0.2 + 0.6 * rand();
        const truth = mu + siteEffect + yearEffect[y] + Math.sqrt(parts.trial) * normal();
        items.push({ trial: `s${s}y${y}`, site: `s${s}`, year: 2015 + y, estimate: truth + se * normal(), se });
      }
    }
    const newSite = mu + Math.sqrt(parts.site + parts.year + parts.trial) * normal();
    const threshold = mu + (rand() * 4 - 2) * Math.sqrt(between + typicalV);
    const base = { method: 'reml' as const, confidence: 0.95, threshold, leaveOneSiteOut: false, crossedWithYear: crossed, crossedProfileLimit: 0, predictionDraws: draws, predictionSeed: r + 1 };
    const boot = poolSiteLevels(items, { ...base, prediction: 'bootstrap-tau2' });
    const plug = boot.newSitePrediction?.plugInT;
    if (!plug || plug.lower === null || plug.upper === null || boot.newSiteLower === null || boot.newSiteUpper === null) continue;
    cell.n++;
    if (plug.lower <= newSite && newSite <= plug.upper) cell.plugIn++;
    if (boot.newSiteLower <= newSite && newSite <= boot.newSiteUpper) cell.pivot++;
    const stated = boot.newSiteProbAboveThreshold as number;
    const bin = cell.calibration[Math.min(4, Math.floor(stated * 5))];
    bin[0]++;
    bin[1] += stated;
    if (newSite > threshold) bin[2]++;
  }
  cells.push(cell);
  const pct = (x: number) => `${((100 * x) / cell.n).toFixed(1)}%`;
  console.log(`${String(sites).padStart(5)} ${`${Math.round(100 * i2)}%`.padStart(5)} ${pct(cell.plugIn).padStart(10)} ${pct(cell.pivot).padStart(16)}   (${cell.n} replicates, ${((Date.now() - started) / 1000).toFixed(0)} s)`);
}

console.log(`\nNew-site prediction coverage, ${crossed ? 'sites crossed with years' : 'trials nested in sites'}, nominal 95%, ${replicates} replicates per cell (Monte Carlo SE about ${(100 * Math.sqrt(0.05 * 0.95 / replicates)).toFixed(1)} points), ${draws} bootstrap refits`);
console.log('sites    I²  plug-in-t  bootstrap-pivot');
for (const c of cells) console.log(`${String(c.sites).padStart(5)} ${`${Math.round(100 * c.i2)}%`.padStart(5)} ${`${((100 * c.plugIn) / c.n).toFixed(1)}%`.padStart(10)} ${`${((100 * c.pivot) / c.n).toFixed(1)}%`.padStart(16)}`);
console.log('\nCalibration of P(new site above the threshold), bootstrap-pivot, I² > 0 pooled: stated (mean in bin) vs share above');
const pooled = Array.from({ length: 5 }, () => [0, 0, 0]);
for (const c of cells) if (c.i2 > 0) c.calibration.forEach((b, i) => b.forEach((x, j) => (pooled[i][j] += x)));
for (let i = 0; i < 5; i++) if (pooled[i][0] > 0) console.log(`  ${(i / 5).toFixed(1)}-${((i + 1) / 5).toFixed(1)}  stated ${(pooled[i][1] / pooled[i][0]).toFixed(3)}  share ${(pooled[i][2] / pooled[i][0]).toFixed(3)}  n ${pooled[i][0]}`);
console.log(`(${((Date.now() - started) / 1000).toFixed(1)} s)`);
