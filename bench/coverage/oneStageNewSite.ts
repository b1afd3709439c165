// Coverage of the one-stage model's new-site prediction interval for a contrast, by simulation.
// Run: npx tsx bench/coverage/oneStageNewSite.ts [replicates]
// Each replicate: T randomised-block trials (3 treatments A, B, C in 3 blocks), plot values
// = treatment mean + trial effect (variance 1) + block effect (0.1) + treatment-by-trial effect
// (sigma²_TxT) + residual (1). The contrast B - A then varies across sites with variance
// 2 sigma²_TxT; its within-trial SE is sqrt(2/3), so sigma²_TxT = 1/3 gives I² about 50%.
// A new site's true contrast is drawn and checked against the one-stage interval by both
// methods (REML, Satterthwaite df, no likelihood-ratio tests or profiles). Seeded.
import { fitOneStage } from '../../src/engine/onestage/fitOneStage.js';
import { resolveContrast } from '../../src/engine/contrasts/resolve.js';
import { mulberry32, normalSampler } from '../../src/engine/stats/random.js';
import type { NetworkInput, PlotObservation, TreatmentInfo } from '../../src/engine/types.js';

const replicates = Number(process.argv[2] ?? 300);
const treatments: TreatmentInfo[] = ['A', 'B', 'C'].map((code) => ({ code, levels: {} }));
const means: Record<string, number> = { A: 5, B: 5.6, C: 6 };
const contrast = resolveContrast({ name: 'B_vs_A', coefficients: { A: -1, B: 1, C: 0 }, divisor: 1 }, treatments);
const cells = [
  { trials: 5, sigma2TT: 1 / 3 },
  { trials: 10, sigma2TT: 1 / 3 },
  { trials: 20, sigma2TT: 1 / 3 },
  { trials: 10, sigma2TT: 3 },
];

function network(seed: number, T: number, sigma2TT: number): { net: NetworkInput; newSite: number } {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const tt = Math.sqrt(sigma2TT);
  const trials = Array.from({ length: T }, (_, i) => {
    const trialEffect = z();
    const txt: Record<string, number> = { A: tt * z(), B: tt * z(), C: tt * z() };
    const plots: PlotObservation[] = [];
    for (let b = 0; b < 3; b++) {
      const blockEffect = Math.sqrt(0.1) * z();
      for (const t of ['A', 'B', 'C']) plots.push({ treatment: t, block: `b${b}`, row: null, col: null, value: means[t] + trialEffect + blockEffect + txt[t] + z() });
    }
    return { trial: `T${i}`, design: 'randomised-blocks' as const, plots };
  });
  const newSite = means.B - means.A + tt * (z() - z());
  return { net: { trait: 'y', factors: [], treatments, trials }, newSite };
}

const started = Date.now();
console.log(`One-stage new-site prediction, contrast B - A, ${replicates} replicates per cell (Monte Carlo SE about ${(100 * Math.sqrt(0.95 * 0.05 / replicates)).toFixed(1)} points)`);
console.log('trials  sigma²_TxT  plug-in-t  bootstrap-tau2');
cells.forEach((cell, c) => {
  const hits = { plug: 0, boot: 0 };
  let used = 0;
  for (let r = 0; r < replicates; r++) {
    const { net, newSite } = network(9000 + 1000 * c + r, cell.trials, cell.sigma2TT);
    const fit = fitOneStage(net, [contrast], {
      random: ['trial', 'block', 'treatment-by-trial'],
      residual: 'common',
      df: 'satterthwaite',
      confidence: 0.95,
      lrt: false,
      profile: false,
      newSite: { method: 'bootstrap-tau2', threshold: 0, draws: 5000, seed: r + 1 },
    });
    const n = fit.newSite?.[0];
    if (!n || n.lower === null || n.upper === null || n.plugInT.lower === null || n.plugInT.upper === null) continue;
    used++;
    if (n.plugInT.lower <= newSite && newSite <= n.plugInT.upper) hits.plug++;
    if (n.lower <= newSite && newSite <= n.upper) hits.boot++;
  }
  const pct = (x: number) => `${((100 * x) / used).toFixed(1)}%`.padStart(9);
  console.log(`${String(cell.trials).padStart(6)}  ${cell.sigma2TT.toFixed(3).padStart(10)}  ${pct(hits.plug)}  ${pct(hits.boot)}      (${used} fits)`);
});
console.log(`(${((Date.now() - started) / 1000).toFixed(1)} s)`);
