// Bench for the crossed (sites x years) bootstrap-pivot refits: a crossed network of trial
// estimates (sites over years with gaps, each site run in a year with probability 0.75) is fitted
// once by REML, then `draws` bootstrap data sets are drawn and refitted as bootstrapPivotPrediction
// does (crossedPivotModel). Prints the time per refit, the interval, and the likelihood
// evaluations per refit of the local search (counted on the same data sets).
// Usage: tsx bench/pooling/crossedRefits.ts [sites] [years] [draws]
import { mulberry32, normalSampler } from '../../src/engine/stats/random.js';
import { crossedLogLik, type CrossedGroup } from '../../src/engine/pooling/multilevel/crossedYearLikelihood.js';
import { fitCrossedYear } from '../../src/engine/pooling/multilevel/fitCrossedYear.js';
import { crossedPivotModel } from '../../src/engine/pooling/multilevel/pivotModels.js';
import { bootstrapPivotPrediction } from '../../src/engine/pooling/multilevel/bootstrapPivotPrediction.js';
import { projectedNewton } from '../../src/engine/pooling/multilevel/projectedNewton.js';
import { projectedScoring } from '../../src/engine/pooling/multilevel/projectedScoring.js';
import { crossedScore } from '../../src/engine/pooling/multilevel/crossedYearScore.js';

const [sites, years, draws] = [Number(process.argv[2] ?? 500), Number(process.argv[3] ?? 8), Number(process.argv[4] ?? 200)];
const normal = normalSampler(mulberry32(500));
const uniform = mulberry32(501);
const truth = { mu: 1, siteTau2: 0.2, trialTau2: 0.3, yearTau2: 0.15 };
const yearEffect = Array.from({ length: years }, () => Math.sqrt(truth.yearTau2) * normal());
const groups: CrossedGroup[] = [];
for (let s = 0; s < sites; s++) {
  const ran = Array.from({ length: years }, (_, y) => y).filter(() => uniform() < 0.75);
  if (ran.length === 0) continue;
  const site = Math.sqrt(truth.siteTau2) * normal();
  const v = Float64Array.from(ran, () => 0.05 + 0.3 * uniform());
  const y = Float64Array.from(ran, (yr, j) => truth.mu + site + yearEffect[yr] + Math.sqrt(truth.trialTau2) * normal() + Math.sqrt(v[j]) * normal());
  groups.push({ site: `S${s}`, trials: ran.map((yr) => `S${s}-${yr}`), y, v, yearIndex: Int32Array.from(ran) });
}
const trials = groups.reduce((n, g) => n + g.y.length, 0);
const fit = fitCrossedYear(groups, years, 'reml', 0, false);
const fitted = { mu: fit.mu, siteTau2: fit.siteTau2, trialTau2: fit.trialTau2, yearTau2: fit.yearTau2 };
const scale = groups.reduce((s, g) => s + g.v.reduce((a, b) => a + b, 0), 0) / trials;
const model = crossedPivotModel(groups, years, fitted, 'reml', scale);
const t0 = performance.now();
const b = bootstrapPivotPrediction(model, { mu: fit.mu, muVariance: fit.muVariance, between: fit.siteTau2 + fit.trialTau2 + fit.yearTau2 }, groups.map((g) => g.y.length), { confidence: 0.95, thresholds: [0], draws, seed: 7 });
const ms = performance.now() - t0;
// evaluations of the local search, on the same data sets
const normal2 = normalSampler(mulberry32(7));
const y = groups.map((g) => new Float64Array(g.y.length));
let evaluations = 0;
let settled = 0;
let scores = 0;
let scored = 0;
let gap = 0;
for (let d = 0; d < draws; d++) {
  model.simulate(normal2, y);
  const data = groups.map((g, i) => ({ ...g, y: y[i] }));
  const local = projectedNewton((x) => (evaluations++, crossedLogLik(data, years, x[1], x[2], x[0], 'reml').logLik), [fitted.yearTau2, fitted.siteTau2, fitted.trialTau2], scale);
  if (local) settled++;
  const start = [fitted.yearTau2, fitted.siteTau2, fitted.trialTau2];
  const fast = projectedScoring((x) => {
    scores++;
    const s = crossedScore(data, years, x[1], x[2], x[0], 'reml');
    return { value: s.logLik, gradient: s.gradient, information: s.information };
  }, start, scale);
  if (fast) scored++;
  if (fast && local) gap = Math.max(gap, ...fast.x.map((v, k) => Math.abs(v - local.x[k])));
}
console.log(`${groups.length} sites, ${years} years, ${trials} trials; ${draws} refits in ${(ms / 1000).toFixed(2)} s (${(ms / draws).toFixed(2)} ms each); local search: ${(evaluations / draws).toFixed(1)} evaluations per refit, ${settled}/${draws} settled; projected scoring: ${(scores / draws).toFixed(1)} score evaluations per refit, ${scored}/${draws} settled, largest tau² difference from the finite-difference search ${gap.toExponential(2)}; interval ${b.lower.toPrecision(10)} to ${b.upper.toPrecision(10)}, failed ${b.failed}`);
