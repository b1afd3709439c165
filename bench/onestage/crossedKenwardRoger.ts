// Time Kenward–Roger adds to the crossed one-stage fit at bench scale (the network of the crossed
// bench case: 500 sites over 8 years with gaps, all seven random terms), beside the REML search
// and the Satterthwaite df in the same run (the machine is shared: read the ratios).
//   npx tsx bench/onestage/crossedKenwardRoger.ts [--sites 500] [--years 8]
import { simulateCrossed } from '../../test/engine/onestage/crossed/support/simulateCrossed.js';
import { crossedData, contrastVector } from '../../src/engine/onestage/crossed/crossedData.js';
import { crossedLayout } from '../../src/engine/onestage/crossed/crossedLayout.js';
import { optimiseCrossed } from '../../src/engine/onestage/crossed/optimiseCrossed.js';
import { satterthwaiteObserved } from '../../src/engine/onestage/crossed/satterthwaiteObserved.js';
import { crossedKenwardRoger } from '../../src/engine/onestage/crossed/crossedKenwardRoger.js';
import { largestBlock } from '../../src/engine/onestage/crossed/crossedInverseParts.js';
import type { CrossedTerm } from '../../src/engine/onestage/crossed/terms.js';

const arg = (name: string) => {
  const i = process.argv.indexOf(name);
  return i >= 0 ? process.argv[i + 1] : undefined;
};
const sites = Number(arg('--sites') ?? 500);
const years = Number(arg('--years') ?? 8);
const terms: CrossedTerm[] = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];
const sim = simulateCrossed({ seed: 500, sites, years, runProbability: 0.75, missing: 0.05 });
const d = crossedData(sim.network, terms, false);
const L = crossedLayout(d, terms, false);
console.log(`${sites} sites over ${years} years: ${d.trials.length} trials, ${d.nObservations} plots, largest site ${largestBlock(d, L)} plots`);
let t0 = performance.now();
const fit = optimiseCrossed(d, L, L.terms.map(() => 1), [], {});
const fitMs = performance.now() - t0;
const codes = d.treatments;
const l = contrastVector(codes, { name: 'T1-CTL', kind: 'coefficients', coefficients: { T1: 1, CTL: -1 }, divisor: 1, meaning: '' }, L.p)!;
const unit = codes.map((_, j) => Float64Array.from({ length: L.p }, (_, i) => (i === j ? 1 : 0)));
t0 = performance.now();
const sat = satterthwaiteObserved(d, L, fit.evaluation, [l, ...unit], fit.derivatives);
const satMs = performance.now() - t0;
t0 = performance.now();
const kr = crossedKenwardRoger(d, L, fit.evaluation);
const krl = [l, ...unit].map((x) => kr.contrast(x));
const krMs = performance.now() - t0;
console.log(`REML search ${(fitMs / 1000).toFixed(2)} s; Satterthwaite df ${(satMs / 1000).toFixed(2)} s; Kenward–Roger ${(krMs / 1000).toFixed(2)} s (${(krMs / fitMs).toFixed(2)} x the search)`);
console.log(`T1-CTL: Satterthwaite df ${sat.df[0]?.toFixed(2)}, Kenward–Roger df ${krl[0].df.toFixed(2)}; means' KR df ${krl.slice(1).map((r) => r.df.toFixed(1)).join(', ')}`);
