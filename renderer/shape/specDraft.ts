// The builder's state and the analysis spec it writes: the same JSON the command reads
// (`manyfield analyze --spec`), and back again when a spec file is loaded.
import type { ContrastDraft } from './contrastCheck.js';

export type Tau2Method = 'reml' | 'ml' | 'dl' | 'pm' | 'fixed';
export type RateModelName = 'linear' | 'quadratic' | 'linear-plateau' | 'quadratic-plateau' | 'exponential' | 'best';

export interface RateDraft {
  readonly factor: string;
  readonly model: RateModelName;
  /** Price of the input per rate unit and of the crop per yield unit, in one currency. */
  readonly inputPrice: number;
  readonly cropPrice: number;
  readonly at: Readonly<Record<string, string>>;
  readonly profitableWithin: number;
  readonly bootstrap: number;
  readonly seed: number;
}

export interface SpecDraft {
  readonly trait: string;
  readonly control: string;
  readonly transform: 'none' | 'log' | 'logit' | 'arcsine-sqrt' | 'sqrt';
  readonly contrasts: readonly ContrastDraft[];
  readonly pairwise: 'none' | 'tukey' | 'holm';
  readonly twoStage: { readonly tau2: Tau2Method; readonly interval: 'hksj' | 'wald' } | null;
  readonly oneStage: { readonly random: readonly string[]; readonly residual: 'common' | 'per-trial'; readonly df: 'satterthwaite' | 'kenward-roger' | 'residual' } | null;
  readonly moderators: readonly string[];
  readonly threshold: number;
  readonly rate: RateDraft | null;
}

/** The spec's JSON form (a plain object; the core validates it). */
export type SpecJson = Record<string, unknown>;

export function contrastToSpec(c: ContrastDraft): SpecJson {
  const name = c.name.trim();
  switch (c.kind) {
    case 'coefficients':
      return { name, coefficients: { ...c.coefficients }, divisor: c.divisor };
    case 'levels':
      return { name, factor: c.factor, levels: [...c.levels] };
    case 'trend':
      return { name, trend: c.factor, degree: c.degree };
    case 'treated-vs-control':
      return { name, kind: 'treated-vs-control' };
  }
}

export function draftToSpec(d: SpecDraft): SpecJson {
  const spec: SpecJson = { trait: d.trait };
  if (d.control) spec.control = d.control;
  spec.transform = d.transform;
  spec.contrasts = d.contrasts.map(contrastToSpec);
  if (d.pairwise !== 'none') spec.pairwise = d.pairwise;
  spec.oneStage = d.oneStage ? { random: [...d.oneStage.random], residual: d.oneStage.residual, df: d.oneStage.df } : null;
  spec.twoStage = d.twoStage ? { ...d.twoStage } : null;
  spec.moderators = [...d.moderators];
  spec.threshold = d.threshold;
  if (d.rate) {
    const at = Object.fromEntries(Object.entries(d.rate.at).filter(([, v]) => v !== ''));
    spec.rateResponse = {
      factor: d.rate.factor,
      model: d.rate.model,
      priceRatio: priceRatio(d.rate.inputPrice, d.rate.cropPrice),
      ...(Object.keys(at).length > 0 ? { at } : {}),
      profitableWithin: d.rate.profitableWithin,
      bootstrap: d.rate.bootstrap,
      seed: d.rate.seed,
    };
  }
  return spec;
}

/** Input price per rate unit over crop price per yield unit: yield units that pay for one rate unit. */
export function priceRatio(inputPrice: number, cropPrice: number): number {
  return inputPrice / cropPrice;
}

function str(v: unknown, fallback: string): string {
  return typeof v === 'string' ? v : fallback;
}

function contrastFromSpec(raw: unknown, i: number): ContrastDraft {
  if (!raw || typeof raw !== 'object') throw new Error(`contrast ${i + 1} is not an object`);
  const c = raw as Record<string, unknown>;
  const name = str(c.name, `contrast_${i + 1}`);
  if (c.coefficients && typeof c.coefficients === 'object') return { kind: 'coefficients', name, coefficients: { ...(c.coefficients as Record<string, number>) }, divisor: typeof c.divisor === 'number' ? c.divisor : 1 };
  if (typeof c.factor === 'string' && Array.isArray(c.levels)) return { kind: 'levels', name, factor: c.factor, levels: [String(c.levels[0]), String(c.levels[1])] };
  if (typeof c.trend === 'string') return { kind: 'trend', name, factor: c.trend, degree: c.degree === 2 || c.degree === 3 ? c.degree : 1 };
  if (c.kind === 'treated-vs-control') return { kind: 'treated-vs-control', name };
  throw new Error(`contrast ${i + 1} ("${name}") is of no kind the builder knows`);
}

/**
 * A spec file read into the builder. `cropPrice` is 1 when the file gives only a ratio: the
 * input price is then the ratio itself (crop price one currency unit per yield unit).
 */
export function specToDraft(spec: SpecJson, base: SpecDraft): SpecDraft {
  const contrasts = Array.isArray(spec.contrasts) ? spec.contrasts.map(contrastFromSpec) : [];
  const two = spec.twoStage as Record<string, unknown> | null | undefined;
  const one = spec.oneStage as Record<string, unknown> | null | undefined;
  const rate = spec.rateResponse as Record<string, unknown> | null | undefined;
  return {
    trait: str(spec.trait, base.trait),
    control: str(spec.control, base.control),
    transform: (str(spec.transform, 'none').toLowerCase() as SpecDraft['transform']),
    contrasts,
    pairwise: (str(spec.pairwise, 'none').toLowerCase() as SpecDraft['pairwise']),
    twoStage: two === null ? null : { tau2: str(two?.tau2, 'reml').toLowerCase() as Tau2Method, interval: str(two?.interval, 'hksj').toLowerCase() as 'hksj' | 'wald' },
    oneStage:
      one === null
        ? null
        : {
            random: Array.isArray(one?.random) ? (one.random as string[]) : ['trial', 'block', 'treatment-by-trial'],
            residual: str(one?.residual, 'common').toLowerCase() as 'common' | 'per-trial',
            df: str(one?.df, 'satterthwaite').toLowerCase() as 'satterthwaite' | 'kenward-roger' | 'residual',
          },
    moderators: Array.isArray(spec.moderators) ? (spec.moderators as string[]) : [],
    threshold: typeof spec.threshold === 'number' ? spec.threshold : 0,
    rate: rate
      ? {
          factor: str(rate.factor, ''),
          model: str(rate.model, 'quadratic').toLowerCase() as RateModelName,
          inputPrice: typeof rate.priceRatio === 'number' ? rate.priceRatio : 1,
          cropPrice: 1,
          at: Object.fromEntries(Object.entries((rate.at as Record<string, unknown>) ?? {}).map(([k, v]) => [k, String(v)])),
          profitableWithin: typeof rate.profitableWithin === 'number' ? rate.profitableWithin : 0,
          bootstrap: typeof rate.bootstrap === 'number' ? rate.bootstrap : 0,
          seed: typeof rate.seed === 'number' ? rate.seed : 1,
        }
      : null,
  };
}
