// Coverage of the pooled-mean intervals (HKSJ, HKSJ with floor, Wald) and of the new-site
// prediction intervals (plug-in t and the bootstrap over the confidence distribution of tau²),
// with a calibration table for the new-site probabilities, by simulation.
// Run: npx tsx bench/coverage/run.ts [replicates] [bootstrap draws]
// For each k in {5, 10, 20, 40} and I² in {0, 50, 90}%: within-trial SEs drawn uniformly
// on [0.2, 0.8] per trial, tau² set so that tau² / (tau² + s²) = I² with s² the typical
// within-trial variance of that replicate (Higgins & Thompson 2002), true effects
// theta_i ~ N(1, tau²), estimates y_i ~ N(theta_i, se_i²), tau² by REML. A new site's true
// effect theta_new ~ N(1, tau²) is drawn for the prediction intervals. For the probabilities a
// threshold is drawn per replicate, uniform on mu ± 2 sqrt(tau² + s²) (s² the typical
// within-trial variance), and the stated P(theta_new > threshold) is compared, in bins, with the
// share of new sites above it. Seeded: the same table every run. HKSJ and the bootstrap
// prediction interval must lie within 93-97% in every cell with k >= 10.
import { poolCore } from '../../src/engine/pooling/poolCore.js';
import { bootstrapPrediction, DEFAULT_PREDICTION_DRAWS } from '../../src/engine/pooling/predictiveDistribution.js';
import { mulberry32, normalSampler } from '../../src/engine/stats/random.js';
import type { FitSettings } from '../../src/engine/pooling/modelFit.js';

const replicates = Number(process.argv[2] ?? 2000);
const draws = Number(process.argv[3] ?? DEFAULT_PREDICTION_DRAWS);
const BINS = 10;
const ks = [5, 10, 20, 40];
const i2s = [0, 0.5, 0.9];
const mu = 1;

const base: FitSettings = { tau2: 'reml', interval: 'hksj', hksjFloor: false, confidence: 0.95 };
const settings = {
  hksj: base,
  hksjFloor: { ...base, hksjFloor: true },
  wald: { ...base, interval: 'wald' as const },
};

interface Cell {
  k: number;
  i2: number;
  hksj: number;
  hksjFloor: number;
  wald: number;
  prediction: number;
  bootstrap: number;
  predictionNa: number;
  /** Per probability bin: [count, sum of stated p, new sites above] for plug-in and bootstrap. */
  calibration: { plugIn: number[][]; bootstrap: number[][] };
}

function emptyBins(): number[][] {
  return Array.from({ length: BINS }, () => [0, 0, 0]);
}

function addToBin(bins: number[][], stated: number, above: boolean): void {
  const b = bins[Math.min(BINS - 1, Math.floor(stated * BINS))];
  b[0]++;
  b[1] += stated;
  if (above) b[2]++;
}

function typicalVariance(v: number[]): number {
  let sw = 0;
  let sw2 = 0;
  for (const x of v) {
    sw += 1 / x;
    sw2 += 1 / (x * x);
  }
  return ((v.length - 1) * sw) / (sw * sw - sw2);
}

function runCell(k: number, i2: number, seed: number): Cell {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const hits = { hksj: 0, hksjFloor: 0, wald: 0, prediction: 0, bootstrap: 0 };
  const calibration = { plugIn: emptyBins(), bootstrap: emptyBins() };
  let predictionNa = 0;
  for (let r = 0; r < replicates; r++) {
    const v = Array.from({ length: k }, () => (0.2 + 0.6 * u()) ** 2);
    const tau2 = i2 === 0 ? 0 : (i2 / (1 - i2)) * typicalVariance(v);
    const tau = Math.sqrt(tau2);
    const y = v.map((vi) => mu + tau * z() + Math.sqrt(vi) * z());
    const thetaNew = mu + tau * z();
    const threshold = mu + (4 * u() - 2) * Math.sqrt(tau2 + typicalVariance(v));
    for (const key of ['hksj', 'hksjFloor', 'wald'] as const) {
      const p = poolCore(y, v, settings[key], threshold);
      if ((p.lower as number) <= mu && mu <= (p.upper as number)) hits[key]++;
      if (key === 'hksj') {
        if (p.predictionLower === null || p.predictionUpper === null || p.probAboveThreshold === null) predictionNa++;
        else {
          if (p.predictionLower <= thetaNew && thetaNew <= p.predictionUpper) hits.prediction++;
          addToBin(calibration.plugIn, p.probAboveThreshold, thetaNew > threshold);
        }
      }
    }
    if (k >= 3) {
      const b = bootstrapPrediction(y, v, { confidence: 0.95, threshold, draws, seed: seed * 7919 + r });
      if (b.lower <= thetaNew && thetaNew <= b.upper) hits.bootstrap++;
      addToBin(calibration.bootstrap, b.probAboveThreshold, thetaNew > threshold);
    }
  }
  return {
    k,
    i2,
    hksj: hits.hksj / replicates,
    hksjFloor: hits.hksjFloor / replicates,
    wald: hits.wald / replicates,
    prediction: hits.prediction / (replicates - predictionNa),
    bootstrap: hits.bootstrap / (replicates - predictionNa),
    predictionNa,
    calibration,
  };
}

const pct = (x: number) => `${(100 * x).toFixed(1)}%`.padStart(8);
const started = Date.now();
const cells: Cell[] = [];
ks.forEach((k, a) =>
  i2s.forEach((i2, b) => {
    cells.push(runCell(k, i2, 20240 + 100 * a + b));
    process.stderr.write(`cell k=${k}, I²=${Math.round(100 * i2)}% done (${cells.length}/${ks.length * i2s.length}, ${((Date.now() - started) / 1000).toFixed(0)} s)\n`);
  }),
);

console.log(`Coverage of nominal 95% intervals, ${replicates} replicates per cell, tau² by REML (Monte Carlo SE about ${(100 * Math.sqrt(0.95 * 0.05 / replicates)).toFixed(2)} points); bootstrap with ${draws} draws`);
console.log('');
console.log('   k    I²      HKSJ  HKSJ>=Wald      Wald  prediction: plug-in-t  bootstrap-tau2');
for (const c of cells) console.log(`${String(c.k).padStart(4)}  ${`${Math.round(100 * c.i2)}%`.padStart(4)}  ${pct(c.hksj)}    ${pct(c.hksjFloor)}  ${pct(c.wald)}               ${pct(c.prediction)}        ${pct(c.bootstrap)}`);
const bad = cells.filter((c) => c.k >= 10 && (c.hksj < 0.93 || c.hksj > 0.97));
const badPrediction = cells.filter((c) => c.k >= 10 && (c.bootstrap < 0.93 || c.bootstrap > 0.97));
const badPredictionPositive = badPrediction.filter((c) => c.i2 > 0);
console.log('');
console.log('HKSJ = Hartung–Knapp–Sidik–Jonkman (t on k - 1 df); HKSJ>=Wald = scale factor floored at 1.');
console.log("plug-in-t = mean ± t(k-2) sqrt(SE² + tau²); bootstrap-tau2 = parametric bootstrap over the confidence distribution of tau² (the default); both for a new site's true effect.");
console.log('');
console.log('Calibration of P(new site above the threshold): stated probability (mean in the bin) vs share of new sites above, by I² (all k pooled)');
const i2Labels = i2s.map((i2) => `I²=${Math.round(100 * i2)}%`);
for (const method of ['bootstrap', 'plugIn'] as const) {
  console.log(`  ${method === 'bootstrap' ? 'bootstrap-tau2' : 'plug-in-t'}`);
  console.log(`  stated in    ${i2Labels.map((l) => `${l}: stated  share      n`.padStart(30)).join('')}`);
  for (let b = 0; b < BINS; b++) {
    const cols = i2s.map((i2) => {
      const tot = [0, 0, 0];
      for (const c of cells.filter((x) => x.i2 === i2)) for (let j = 0; j < 3; j++) tot[j] += c.calibration[method][b][j];
      return tot[0] === 0 ? '-'.padStart(30) : `${(tot[1] / tot[0]).toFixed(3).padStart(16)}  ${(tot[2] / tot[0]).toFixed(3)}  ${String(tot[0]).padStart(5)}`;
    });
    console.log(`  ${(b / BINS).toFixed(1)}-${((b + 1) / BINS).toFixed(1)}     ${cols.join('')}`);
  }
  // Largest gap between share and stated probability, in units of its binomial Monte Carlo SE,
  // over bins with 100 or more replicates (I² > 0; at I² = 0 every new site sits at the mean).
  let worst = 0;
  let worstGap = 0;
  for (const i2 of i2s.filter((x) => x > 0)) {
    for (let b = 0; b < BINS; b++) {
      const tot = [0, 0, 0];
      for (const c of cells.filter((x) => x.i2 === i2)) for (let j = 0; j < 3; j++) tot[j] += c.calibration[method][b][j];
      if (tot[0] < 100) continue;
      const stated = tot[1] / tot[0];
      const gap = Math.abs(tot[2] / tot[0] - stated);
      const z = gap / Math.sqrt(Math.max(stated * (1 - stated), 1e-4) / tot[0]);
      if (z > worst) {
        worst = z;
        worstGap = gap;
      }
    }
  }
  console.log(`  largest |share - stated| over bins of 100 or more with I² > 0: ${worstGap.toFixed(3)} (${worst.toFixed(1)} Monte Carlo SEs)`);
}
console.log('');
const fail = (list: Cell[], pick: (c: Cell) => number) => `FAIL (${list.map((c) => `k=${c.k}, I²=${100 * c.i2}%: ${pct(pick(c)).trim()}`).join('; ')})`;
console.log(`Check: HKSJ within 93-97% in every cell with k >= 10: ${bad.length === 0 ? 'PASS' : fail(bad, (c) => c.hksj)}`);
console.log(`(${((Date.now() - started) / 1000).toFixed(1)} s)`);
console.log(`prediction within 93-97% in every cell with k >= 10 and I² > 0: ${badPredictionPositive.length === 0 ? 'PASS' : fail(badPredictionPositive, (c) => c.bootstrap)}`);
console.log('(At I² = 0 the new site\'s effect equals the mean, so any interval that allows for uncertainty in tau² is wider than a confidence interval for the mean and must over-cover; the required line below still counts those cells.)');
console.log(`prediction within 93-97% in every cell with k >= 10: ${badPrediction.length === 0 ? 'PASS' : fail(badPrediction, (c) => c.bootstrap)}`);
if (bad.length || badPrediction.length) process.exitCode = 1;
