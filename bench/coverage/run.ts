// Coverage of the pooled-mean intervals (HKSJ, HKSJ with floor, Wald) and of the new-site
// prediction interval, by simulation. Run: npx tsx bench/coverage/run.ts [replicates]
// For each k in {5, 10, 20, 40} and I² in {0, 50, 90}%: within-trial SEs drawn uniformly
// on [0.2, 0.8] per trial, tau² set so that tau² / (tau² + s²) = I² with s² the typical
// within-trial variance of that replicate (Higgins & Thompson 2002), true effects
// theta_i ~ N(1, tau²), estimates y_i ~ N(theta_i, se_i²), tau² by REML. A new site's true
// effect theta_new ~ N(1, tau²) is drawn for the prediction interval. Seeded: the same
// table every run. HKSJ must lie within 93-97% in every cell with k >= 10.
import { poolCore } from '../../src/engine/pooling/poolCore.js';
import { mulberry32, normalSampler } from '../../src/engine/stats/random.js';
import type { FitSettings } from '../../src/engine/pooling/modelFit.js';

const replicates = Number(process.argv[2] ?? 2000);
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
  predictionNa: number;
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
  const hits = { hksj: 0, hksjFloor: 0, wald: 0, prediction: 0 };
  let predictionNa = 0;
  for (let r = 0; r < replicates; r++) {
    const v = Array.from({ length: k }, () => (0.2 + 0.6 * u()) ** 2);
    const tau2 = i2 === 0 ? 0 : (i2 / (1 - i2)) * typicalVariance(v);
    const tau = Math.sqrt(tau2);
    const y = v.map((vi) => mu + tau * z() + Math.sqrt(vi) * z());
    const thetaNew = mu + tau * z();
    for (const key of ['hksj', 'hksjFloor', 'wald'] as const) {
      const p = poolCore(y, v, settings[key], 0);
      if ((p.lower as number) <= mu && mu <= (p.upper as number)) hits[key]++;
      if (key === 'hksj') {
        if (p.predictionLower === null || p.predictionUpper === null) predictionNa++;
        else if (p.predictionLower <= thetaNew && thetaNew <= p.predictionUpper) hits.prediction++;
      }
    }
  }
  return {
    k,
    i2,
    hksj: hits.hksj / replicates,
    hksjFloor: hits.hksjFloor / replicates,
    wald: hits.wald / replicates,
    prediction: hits.prediction / (replicates - predictionNa),
    predictionNa,
  };
}

const pct = (x: number) => `${(100 * x).toFixed(1)}%`.padStart(8);
const started = Date.now();
const cells: Cell[] = [];
ks.forEach((k, a) => i2s.forEach((i2, b) => cells.push(runCell(k, i2, 20240 + 100 * a + b))));

console.log(`Coverage of nominal 95% intervals, ${replicates} replicates per cell, tau² by REML (Monte Carlo SE about ${(100 * Math.sqrt(0.95 * 0.05 / replicates)).toFixed(2)} points)`);
console.log('');
console.log('   k    I²      HKSJ  HKSJ>=Wald      Wald  prediction');
for (const c of cells) console.log(`${String(c.k).padStart(4)}  ${`${Math.round(100 * c.i2)}%`.padStart(4)}  ${pct(c.hksj)}    ${pct(c.hksjFloor)}  ${pct(c.wald)}    ${pct(c.prediction)}`);
const bad = cells.filter((c) => c.k >= 10 && (c.hksj < 0.93 || c.hksj > 0.97));
console.log('');
console.log('HKSJ = Hartung–Knapp–Sidik–Jonkman (t on k - 1 df); HKSJ>=Wald = scale factor floored at 1; prediction = mean ± t(k-2) sqrt(SE² + tau²) for a new site\'s true effect.');
console.log(`Check: HKSJ within 93-97% in every cell with k >= 10: ${bad.length === 0 ? 'PASS' : `FAIL (${bad.map((c) => `k=${c.k}, I²=${100 * c.i2}%: ${pct(c.hksj).trim()}`).join('; ')})`}`);
console.log(`(${((Date.now() - started) / 1000).toFixed(1)} s)`);
if (bad.length) process.exitCode = 1;
