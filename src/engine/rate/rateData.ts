// Picks the plots that enter one trial's rate curve and builds the blocking offsets.
// Treatments qualify when their rate is numeric (or they are the network's control, taken
// as rate 0) and, for each factor in `at`, their level equals the chosen level or does not
// apply (null, as for an untreated control). Without `at` all treatments enter, so each rate
// is fitted at the plot-weighted average over the other factors.
import { plotName } from '../plotName.js';
import type { NetworkInput, TrialInput, TreatmentInfo } from '../types.js';
import { RateResponseInputError } from './errors.js';

export interface TrialRateData {
  readonly trial: string;
  readonly rate: Float64Array;
  readonly y: Float64Array;
  /** Intercept plus sum-to-zero coded blocking columns, n x q row-major. */
  readonly offsets: Float64Array;
  readonly offsetCols: number;
  readonly distinctRates: number[];
  readonly hasZeroRate: boolean;
}

export function treatmentRates(network: NetworkInput, factor: string, at: Readonly<Record<string, string | number>> | undefined): Map<string, number> {
  const info = network.factors.find((f) => f.name === factor);
  if (!info) throw new RateResponseInputError(`rate factor "${factor}" is not a factor of this network (factors: ${network.factors.map((f) => f.name).join(', ') || 'none'})`);
  if (info.kind !== 'numeric') throw new RateResponseInputError(`rate factor "${factor}" is ${info.kind}; a rate curve needs a numeric factor`);
  for (const name of Object.keys(at ?? {})) {
    if (name === factor) throw new RateResponseInputError(`"at" cannot fix the rate factor "${factor}" itself`);
    if (!network.factors.some((f) => f.name === name)) throw new RateResponseInputError(`"at" names factor "${name}", which this network does not have`);
  }
  const out = new Map<string, number>();
  for (const t of network.treatments) {
    const rate = rateOf(t, factor, network.control);
    if (rate === null) continue;
    if (!matchesAt(t, at)) continue;
    if (rate < 0) throw new RateResponseInputError(`treatment ${t.code} has ${factor} = ${rate}; rates must be >= 0`);
    out.set(t.code, rate);
  }
  if (at && Object.keys(at).length > 0) {
    for (const [name, level] of Object.entries(at)) {
      const known = network.treatments.some((t) => t.levels[name] !== null && t.levels[name] !== undefined && String(t.levels[name]) === String(level));
      if (!known) throw new RateResponseInputError(`"at" asks for ${name} = ${String(level)}, but no treatment has that level`);
    }
  }
  return out;
}

/** The rates of one trial: a treatment applied at a site-specific amount there takes that amount. */
export function appliedRates(trial: TrialInput, rates: Map<string, number>, factor: string): Map<string, number> {
  const applied = trial.appliedLevels;
  if (!applied) return rates;
  const own = new Map(rates);
  for (const [code, levels] of Object.entries(applied)) if (own.has(code) && factor in levels) own.set(code, levels[factor]);
  return own;
}

function rateOf(t: TreatmentInfo, factor: string, control: string | undefined): number | null {
  const v = t.levels[factor];
  if (typeof v === 'number' && Number.isFinite(v)) return v;
  if (typeof v === 'string' && v.trim() !== '' && Number.isFinite(Number(v))) return Number(v);
  // The untreated control usually carries no rate level: it is the zero-rate reference.
  if ((v === null || v === undefined) && control !== undefined && t.code === control) return 0;
  return null;
}

function matchesAt(t: TreatmentInfo, at: Readonly<Record<string, string | number>> | undefined): boolean {
  if (!at) return true;
  for (const [name, level] of Object.entries(at)) {
    const v = t.levels[name];
    if (v === null || v === undefined) continue;
    if (String(v) !== String(level)) return false;
  }
  return true;
}

/** The blocking factors of a design: additive fixed offsets. */
function blockingLabels(trial: TrialInput): ((p: TrialInput['plots'][number]) => string | null)[] {
  switch (trial.design) {
    case 'completely-randomised':
      return [];
    case 'randomised-blocks':
      return [(p) => p.block];
    // Rows and columns, as the per-trial analysis models these designs.
    case 'latin-square':
    case 'row-column':
      return [(p) => (p.row === null ? null : String(p.row)), (p) => (p.col === null ? null : String(p.col))];
  }
}

export function trialRateData(trial: TrialInput, rates: Map<string, number>): TrialRateData {
  const plots = trial.plots.filter((p) => rates.has(p.treatment) && p.value !== null && Number.isFinite(p.value) && !p.excluded);
  const n = plots.length;
  const labelers = blockingLabels(trial).filter((lab) => plots.some((p) => lab(p) !== null));
  for (const lab of labelers) {
    const bad = plots.find((p) => lab(p) === null);
    if (bad) throw new RateResponseInputError(`trial ${trial.trial}: ${plotName(bad)} (treatment ${bad.treatment}) has no block/row/column label although the design (${trial.design}) needs one`);
  }
  // Sum-to-zero coding: level j < last gets +1 in column j, the last level -1 in all.
  const codings = labelers.map((lab) => {
    const levels = [...new Set(plots.map((p) => lab(p) as string))].sort(naturalCompare);
    return { lab, levels };
  });
  const q = 1 + codings.reduce((s, c) => s + Math.max(0, c.levels.length - 1), 0);
  const offsets = new Float64Array(n * q);
  const rate = new Float64Array(n);
  const y = new Float64Array(n);
  plots.forEach((p, i) => {
    rate[i] = rates.get(p.treatment) as number;
    y[i] = p.value as number;
    offsets[i * q] = 1;
    let col = 1;
    for (const c of codings) {
      const k = c.levels.indexOf(c.lab(p) as string);
      const m = c.levels.length;
      for (let j = 0; j < m - 1; j++) offsets[i * q + col + j] = k === m - 1 ? -1 : k === j ? 1 : 0;
      col += m - 1;
    }
  });
  const distinctRates = [...new Set(Array.from(rate))].sort((a, b) => a - b);
  return { trial: trial.trial, rate, y, offsets, offsetCols: q, distinctRates, hasZeroRate: distinctRates.length > 0 && distinctRates[0] === 0 };
}

// One collator for every comparison: localeCompare with options builds a new one per call,
// which at 4,000 trials cost a third of a second; the order is the same.
const natural = new Intl.Collator('en', { numeric: true });

function naturalCompare(a: string, b: string): number {
  return natural.compare(a, b);
}
