import { writeFileSync } from 'node:fs';
import { simulateCrossed } from './test/engine/onestage/crossed/support/simulateCrossed.js';
const sim = simulateCrossed({ seed: 500, sites: 500, years: 8, runProbability: 0.75, missing: 0.05 });
writeFileSync('/tmp/w15res/bench.csv', sim.csv);
const terms = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];
for (const residual of ['common', 'per-trial'])
  writeFileSync(`/tmp/w15res/spec-${residual}.json`, JSON.stringify({ trait: 'y', columns: { site: 'site', year: 'year', trial: 'env', block: 'block', treatment: 'trt', response: 'y' }, control: 'CTL', contrasts: [{ name: 'treated_vs_control', kind: 'treated-vs-control' }], twoStage: null, oneStage: { random: terms, residual, df: 'satterthwaite', lrt: false, profile: false, prediction: 'plug-in-t' } }));
console.log(sim.network.trials.length, 'trials');
