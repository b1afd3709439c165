// The declarative analysis spec: one JSON document drives the CLI, the screens and reports,
// and is stored with every result so any number can be reproduced.
import { z } from './zod.js';
import { randomTermSchema } from './randomTerms.js';

const contrastName = z.string().min(1).max(120);

/** A method or option name matched in any case ("DL", "Reml", "HKSJ"), stored in lower case. */
function looseEnum<const T extends readonly [string, ...string[]]>(values: T) {
  return z
    .string()
    .transform((s) => s.trim().toLowerCase())
    .pipe(z.enum(values));
}
/** Upper bounds on the counts a spec may ask for (well above any real network's needs). */
export const MAX_BOOTSTRAP = 10_000;
export const MAX_CONTRASTS = 200;
export const MAX_MODERATORS = 50;
export const MAX_EXCLUSIONS = 100_000;

export const coefficientContrastSchema = z.object({
  name: contrastName,
  coefficients: z.record(z.string(), z.number().finite()),
  divisor: z.number().finite().refine((d) => d !== 0, 'divisor must not be zero').default(1),
}).strict();

export const factorLevelsContrastSchema = z.object({
  name: contrastName,
  factor: z.string().min(1),
  /** Mean at levels[0] minus mean at levels[1], averaged over the other factors. */
  levels: z.tuple([z.union([z.string(), z.number()]), z.union([z.string(), z.number()])]),
}).strict();

export const trendContrastSchema = z.object({
  name: contrastName,
  trend: z.string().min(1),
  degree: z.union([z.literal(1), z.literal(2), z.literal(3)]).default(1),
}).strict();

export const controlContrastSchema = z.object({
  name: contrastName,
  /** All treated treatments averaged, minus the control. */
  kind: z.literal('treated-vs-control'),
}).strict();

export const contrastSpecSchema = z.union([
  coefficientContrastSchema,
  factorLevelsContrastSchema,
  trendContrastSchema,
  controlContrastSchema,
]);
export type ContrastSpec = z.infer<typeof contrastSpecSchema>;

export const columnsSchema = z
  .object({
    site: z.string().optional(),
    year: z.string().optional(),
    trial: z.string().optional(),
    block: z.string().optional(),
    treatment: z.string().optional(),
    response: z.string().optional(),
    row: z.string().optional(),
    col: z.string().optional(),
    design: z.string().optional(),
    trait: z.string().optional(),
    plot: z.string().optional(),
    factors: z.record(z.string(), z.string()).optional(),
    covariates: z.array(z.string()).optional(),
    /** Summary-data pooling: one row per trial with an estimate and its standard error. */
    estimate: z.string().optional(),
    se: z.string().optional(),
    df: z.string().optional(),
  })
  .strict();
export type ColumnsSpec = z.infer<typeof columnsSchema>;

export const transformSchema = looseEnum(['none', 'log', 'logit', 'arcsine-sqrt', 'sqrt']);

export const oneStageSchema = z
  .object({
    random: z.array(randomTermSchema).default(['trial', 'block', 'treatment-by-trial']),
    residual: looseEnum(['common', 'per-trial']).default('common'),
    /** Years as fixed effects (few years) instead of, or without, a random "year" term. */
    yearAsFixed: z.boolean().default(false),
    df: looseEnum(['satterthwaite', 'kenward-roger', 'residual']).default('satterthwaite'),
    /** Numeric trial covariates given a fixed slope (centred at their mean over the trials used). */
    covariates: z.array(z.string()).max(MAX_MODERATORS).default([]),
    /** Likelihood-ratio test of each variance component (one refit per component). */
    lrt: z.boolean().default(true),
    /** Profile-likelihood intervals for the variance components (default: networks up to 200 trials). */
    profile: z.boolean().optional(),
    /** New-site prediction per contrast: 'bootstrap-tau2' (default) or 'plug-in-t', as for twoStage. */
    prediction: looseEnum(['bootstrap-tau2', 'plug-in-t']).default('bootstrap-tau2'),
    predictionDraws: z.number().int().min(1000).max(1_000_000).default(20000),
    predictionSeed: z.number().int().min(0).max(4294967295).default(20190601),
    /** With site and year terms: refits of the new-site-in-a-new-year bootstrap (each a REML refit). */
    siteLevelDraws: z.number().int().min(100).max(100_000).default(1000),
  })
  .strict();

export const twoStageSchema = z
  .object({
    tau2: looseEnum(['reml', 'ml', 'dl', 'pm', 'fixed']).default('reml'),
    interval: looseEnum(['hksj', 'wald']).default('hksj'),
    /** Keep the HKSJ interval from being narrower than the Wald interval. */
    hksjFloor: z.boolean().default(false),
    /**
     * Levels of the pooling: 'trial' (each trial an independent environment) or 'site-and-trial'
     * (also trials nested in sites: a site tau² and a trial-within-site tau², by REML or ML,
     * reported beside the trial-level pool as `siteLevels`); 'site-year-and-trial' adds a year
     * effect crossed with the sites (year tau²).
     */
    levels: looseEnum(['trial', 'site-and-trial', 'site-year-and-trial']).default('trial'),
    /**
     * New-site prediction interval and probabilities: 'bootstrap-tau2' carries the uncertainty in
     * tau² (parametric bootstrap over its confidence distribution); 'plug-in-t' is
     * mean ± t(k - 2) sqrt(SE² + tau²) with tau² taken as known.
     */
    prediction: looseEnum(['bootstrap-tau2', 'plug-in-t']).default('bootstrap-tau2'),
    /** Bootstrap draws and seed: the same seed gives the same interval. */
    predictionDraws: z.number().int().min(1000).max(1_000_000).default(20000),
    predictionSeed: z.number().int().min(0).max(4294967295).default(20190601),
    /** Refits of the site-level (multilevel) bootstrap prediction, each a full REML/ML fit. */
    siteLevelDraws: z.number().int().min(100).max(100_000).default(1000),
  })
  .strict();

export const rateResponseSchema = z
  .object({
    factor: z.string().min(1),
    model: looseEnum(['linear', 'quadratic', 'linear-plateau', 'quadratic-plateau', 'exponential', 'best']).default('quadratic'),
    priceRatio: z.number().positive(),
    at: z.record(z.string(), z.union([z.string(), z.number()])).optional(),
    profitableWithin: z.number().nonnegative().default(0),
    /** Resamples over trials; bounded so a typo cannot start hours of work. */
    bootstrap: z.number().int().nonnegative().max(MAX_BOOTSTRAP).default(0),
    seed: z.number().int().default(1),
  })
  .strict();

/**
 * One plot left out: named by the field's own plot label (`plot`, the plot column of the data), or
 * — only when asked for explicitly — by its row in the data file (`row`). Never by an internal id,
 * so the same spec works on every workspace built from the same files.
 */
export const exclusionSchema = z
  .object({
    trial: z.string().min(1),
    plot: z.union([z.string().min(1), z.number()]).optional(),
    row: z.number().int().positive().optional(),
    reason: z.string().min(1),
  })
  .strict()
  .refine((e) => (e.plot === undefined) !== (e.row === undefined), {
    message: 'name the plot by its label ("plot": "204") or, explicitly, by its file row ("row": 17) — exactly one of the two',
  });
export type ExclusionSpec = z.infer<typeof exclusionSchema>;

export const analysisSpecSchema = z
  .object({
    trait: z.string().min(1).optional(),
    columns: columnsSchema.optional(),
    control: z.string().optional(),
    transform: transformSchema.default('none'),
    /** Offset added before a log transform when zeros occur; default rule documented in the engine. */
    logOffset: z.number().nonnegative().optional(),
    contrasts: z.array(contrastSpecSchema).max(MAX_CONTRASTS).default([]),
    pairwise: looseEnum(['none', 'tukey', 'holm']).default('none'),
    oneStage: oneStageSchema.nullable().optional(),
    twoStage: twoStageSchema.nullable().optional(),
    moderators: z.array(z.string()).max(MAX_MODERATORS).default([]),
    threshold: z.number().default(0),
    confidence: z.number().gt(0.5).lt(1).default(0.95),
    rateResponse: rateResponseSchema.nullable().optional(),
    /** How to read the data file of `analyze --data` (the mapping's reader options). */
    reading: z
      .object({ decimalComma: z.boolean().optional(), sheet: z.string().min(1).optional(), delimiter: z.string().length(1).optional() })
      .strict()
      .optional(),
    /** Plots to leave out, each with the reason recorded in the result. */
    exclude: z.array(exclusionSchema).max(MAX_EXCLUSIONS).default([]),
  })
  .strict();

export type AnalysisSpec = z.infer<typeof analysisSpecSchema>;
export type AnalysisSpecInput = z.input<typeof analysisSpecSchema>;
