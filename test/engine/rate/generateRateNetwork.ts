// Random rate-trial networks for the tests (invented data, fixed seeds): a control plus
// each positive rate at two timings, in randomised complete blocks (or completely
// randomised), with block effects, a timing effect and normal noise around a true curve.
import { mulberry32, normalSampler } from '../../../src/engine/stats/random.js';
import type { NetworkInput, PlotObservation, TrialDesign, TrialInput, TreatmentInfo } from '../../../src/engine/types.js';

export type TrueCurve = (x: number) => number;

export interface GenerateOptions {
  readonly seed: number;
  readonly rates?: readonly number[];
  readonly blocks?: number;
  readonly sd?: number;
  /** One true curve per trial; the i-th trial uses curves[i % length]. */
  readonly curves: readonly TrueCurve[];
  readonly trials: number;
  readonly designs?: readonly TrialDesign[];
  /** Drop this many plots at random per trial (unbalanced data). */
  readonly dropPlots?: number;
  readonly lateShift?: number;
}

export const DEFAULT_RATES = [0, 40, 80, 120, 160, 200];

export function rateTreatments(rates: readonly number[]): TreatmentInfo[] {
  const out: TreatmentInfo[] = [{ code: 'CTL', levels: { rate: null, timing: null } }];
  for (const r of rates.filter((x) => x > 0)) {
    out.push({ code: `E${r}`, levels: { rate: r, timing: 'early' } });
    out.push({ code: `L${r}`, levels: { rate: r, timing: 'late' } });
  }
  return out;
}

export function generateRateNetwork(o: GenerateOptions): NetworkInput {
  const u = mulberry32(o.seed);
  const z = normalSampler(u);
  const rates = o.rates ?? DEFAULT_RATES;
  const treatments = rateTreatments(rates);
  const nb = o.blocks ?? 4;
  const sd = o.sd ?? 0.25;
  const trials: TrialInput[] = [];
  for (let t = 0; t < o.trials; t++) {
    const design = o.designs ? o.designs[t % o.designs.length] : 'randomised-blocks';
    const curve = o.curves[t % o.curves.length];
    // Centred block effects, so the curve's intercept is the mean over blocks.
    const rawBlock = Array.from({ length: nb }, () => 0.4 * z());
    const blockEff = rawBlock.map((v) => v - rawBlock.reduce((s, w) => s + w, 0) / nb);
    // Row-column trials: rows are the blocks, treatments placed at random along each row,
    // and every column carries its own effect too.
    const rowCol = design === 'row-column';
    const colEff = treatments.map(() => (rowCol ? 0.3 * z() : 0));
    let plots: PlotObservation[] = [];
    for (let b = 0; b < nb; b++) {
      const order = treatments.map((_, i) => i).sort(() => u() - 0.5);
      treatments.forEach((tr, j) => {
        const x = (tr.levels.rate as number | null) ?? 0;
        const shift = tr.levels.timing === 'late' ? (o.lateShift ?? -0.1) : 0;
        const col = order[j];
        const value = curve(x) + shift + (design === 'completely-randomised' ? 0 : blockEff[b]) + colEff[col] + sd * z();
        plots.push({
          plotId: `${t}-${b}-${tr.code}`,
          treatment: tr.code,
          block: design === 'completely-randomised' ? null : `B${b + 1}`,
          row: rowCol ? b + 1 : null,
          col: rowCol ? col + 1 : null,
          value,
        });
      });
    }
    for (let k = 0; k < (o.dropPlots ?? 0); k++) plots = plots.filter((_, i) => i !== Math.floor(u() * plots.length));
    trials.push({ trial: `T${String(t + 1).padStart(2, '0')}`, design, plots });
  }
  return {
    trait: 'yield',
    unit: 't/ha',
    factors: [
      { name: 'rate', kind: 'numeric', unit: 'kg/ha' },
      { name: 'timing', kind: 'categorical' },
    ],
    treatments,
    control: 'CTL',
    trials,
  };
}

/** The plots of one trial the analysis should use, as CSV for R (rate 0 for the control). */
export function trialCsv(network: NetworkInput, trial: TrialInput, timing: string | null): string {
  const rateOf = new Map(network.treatments.map((t) => [t.code, t.levels.rate === null ? 0 : (t.levels.rate as number)]));
  const timingOf = new Map(network.treatments.map((t) => [t.code, t.levels.timing]));
  const lines = ['block,rate,y'];
  for (const p of trial.plots) {
    const tm = timingOf.get(p.treatment);
    if (timing !== null && tm !== null && tm !== timing) continue;
    if (p.value === null) continue;
    lines.push(`${p.block ?? 'none'},${rateOf.get(p.treatment)},${p.value.toPrecision(17)}`);
  }
  return lines.join('\n') + '\n';
}

export const quadraticCurve = (a: number, b: number, c: number): TrueCurve => (x) => a + b * x + c * x * x;
export const exponentialCurve = (a: number, b: number, c: number): TrueCurve => (x) => a + b * (1 - Math.exp(-c * x));
export const linearPlateauCurve = (a: number, b: number, x0: number): TrueCurve => (x) => a + b * Math.min(x, x0);
export const quadraticPlateauCurve = (a: number, b: number, x0: number): TrueCurve => (x) => {
  const m = Math.min(x, x0);
  return a + b * m - (b * m * m) / (2 * x0);
};

/** As trialCsv, with the row and column of each plot (row-column trials). */
export function trialCsvRowCol(network: NetworkInput, trial: TrialInput, timing: string | null): string {
  const rateOf = new Map(network.treatments.map((t) => [t.code, t.levels.rate === null ? 0 : (t.levels.rate as number)]));
  const timingOf = new Map(network.treatments.map((t) => [t.code, t.levels.timing]));
  const lines = ['row,col,rate,y'];
  for (const p of trial.plots) {
    const tm = timingOf.get(p.treatment);
    if (timing !== null && tm !== null && tm !== timing) continue;
    if (p.value === null) continue;
    lines.push(`${p.row},${p.col},${rateOf.get(p.treatment)},${p.value.toPrecision(17)}`);
  }
  return lines.join('\n') + '\n';
}
