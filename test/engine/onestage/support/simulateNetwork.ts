// Random trial networks for the one-stage checks and the bench: trials of treatments x blocks
// with trial, block, treatment-by-trial and residual noise, optionally a residual variance per
// trial and some missing plots. Seeded, so every run draws the same network.
import { mulberry32, normalSampler } from '../../../../src/engine/stats/random.js';
import type { NetworkInput, PlotObservation, TrialInput } from '../../../../src/engine/types.js';

export interface SimulationSettings {
  readonly seed: number;
  readonly trials: number;
  readonly treatments?: number;
  readonly blocks?: number;
  /** Standard deviations of the random terms; 0 makes the term truly absent. */
  readonly sdTrial?: number;
  readonly sdBlock?: number;
  readonly sdTreatmentTrial?: number;
  readonly sdResidual?: number;
  /** Residual sd of each trial drawn uniformly from [sdResidual * lo, sdResidual * hi]. */
  readonly residualSpread?: readonly [number, number];
  /** Probability that a plot is missing. */
  readonly missing?: number;
}

export interface SimulatedNetwork {
  readonly network: NetworkInput;
  /** env,block,trt,y with a header; missing plots are left out. */
  readonly csv: string;
}

export function simulateNetwork(s: SimulationSettings): SimulatedNetwork {
  const uniform = mulberry32(s.seed);
  const normal = normalSampler(uniform);
  const nT = s.treatments ?? 7;
  const nB = s.blocks ?? 4;
  const codes = Array.from({ length: nT }, (_, j) => (j === 0 ? 'CTL' : `T${j}`));
  const effects = codes.map((_, j) => 5 + 0.3 * j + (j === 0 ? -0.5 : 0));
  const trials: TrialInput[] = [];
  const lines = ['env,block,trt,y'];
  for (let i = 0; i < s.trials; i++) {
    const env = `E${String(i + 1).padStart(4, '0')}`;
    const uTrial = (s.sdTrial ?? 1) * normal();
    const uBlock = Array.from({ length: nB }, () => (s.sdBlock ?? 0.4) * normal());
    const uInt = codes.map(() => (s.sdTreatmentTrial ?? 0.3) * normal());
    const [lo, hi] = s.residualSpread ?? [1, 1];
    const sdE = (s.sdResidual ?? 0.5) * (lo + (hi - lo) * uniform());
    const plots: PlotObservation[] = [];
    for (let b = 0; b < nB; b++)
      for (let j = 0; j < nT; j++) {
        const y = effects[j] + uTrial + uBlock[b] + uInt[j] + sdE * normal();
        const missing = uniform() < (s.missing ?? 0);
        const value = missing ? null : Math.round(y * 1e6) / 1e6;
        plots.push({ treatment: codes[j], block: `B${b + 1}`, row: null, col: null, value });
        if (value !== null) lines.push(`${env},B${b + 1},${codes[j]},${value}`);
      }
    trials.push({ trial: env, design: 'randomised-blocks', plots });
  }
  const network: NetworkInput = {
    trait: 'yield',
    factors: [],
    treatments: codes.map((code) => ({ code, levels: {} })),
    control: 'CTL',
    trials,
  };
  return { network, csv: lines.join('\n') + '\n' };
}
