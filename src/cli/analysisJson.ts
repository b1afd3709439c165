// The document `analyze --json` writes by default: the summary report (detail "summary") laid
// out in columns so that thousands of trials do not repeat every field name thousands of times.
// Nothing is rounded and nothing is recomputed: every number is the report's own, and
// `expandAnalysisJson` gives the report back exactly (the README's "Compact JSON" section
// describes the layout). Each trial keeps the DESIGN §5 contract: `{trial, ..., contrasts: [...]}`.
// Only the command writes this layout; the api, the screens and saved analyses keep the report.

/** The layout marker at the top of the document. */
export const COLUMNS_LAYOUT = 'columns';

/** Fields a trial keeps in its own object; the rest of a trial summary goes to `twoStage.trialColumns`. */
const KEPT = ['trial', 'site', 'year', 'n', 'flags', 'contrasts'] as const;
/** Plain per-trial fields written as one array each (null where a trial has none). */
const PLAIN = ['design', 'residualDf', 'sigma', 'transform', 'pairwise', 'excluded', 'missing'] as const;
/** Fields that appear only in some trials: their column is left out when no trial has them. */
const OPTIONAL = new Set<string>(['transform', 'pairwise']);
const MEAN_FIELDS = ['estimate', 'se', 'n'] as const;
const DIAGNOSTIC_FIELDS = ['maxAbsStudentized', 'maxCooksDistance', 'influentialPlots', 'unequalVariancesP', 'spatialTrendP'] as const;
const ONE_STAGE_TRIAL_FIELDS = ['blup', 'raw', 'rawSe', 'rawDf'] as const;

// The report is plain JSON data: records of unknown fields, read by name here.
type Row = Record<string, unknown>;

const isRow = (v: unknown): v is Row => typeof v === 'object' && v !== null && !Array.isArray(v);
const same = (a: readonly unknown[], b: readonly unknown[]): boolean => a.length === b.length && a.every((x, i) => x === b[i]);
const column = (rows: readonly Row[], field: string): unknown[] => rows.map((r) => (field in r ? r[field] : null));

/** The summary report in columns; any other document (detail "plots", a summary-file pool) is returned as it is. */
export function compactAnalysisJson(report: unknown): unknown {
  if (!isRow(report) || report.detail !== 'summary' || !isRow(report.twoStage)) return report;
  const twoStage = report.twoStage;
  const out: Row = { ...report, layout: COLUMNS_LAYOUT, twoStage: { ...twoStage, ...compactTrials(twoStage.trials as Row[]), pooled: (twoStage.pooled as Row[]).map(compactPool) } };
  if (isRow(report.oneStage)) out.oneStage = { ...report.oneStage, trials: compactOneStageTrials(report.oneStage.trials as Row[]) };
  return out;
}

/** The summary report back from the document `compactAnalysisJson` wrote (a document in another layout as it is). */
export function expandAnalysisJson(doc: unknown): unknown {
  if (!isRow(doc) || doc.layout !== COLUMNS_LAYOUT) return doc;
  const { layout: _layout, ...report } = doc;
  const twoStage = doc.twoStage as Row;
  const { trialColumns, treatments, outlierThreshold, ...rest } = twoStage;
  const trials = trialColumns === undefined ? (twoStage.trials as Row[]) : expandTrials(twoStage.trials as Row[], trialColumns as Row, treatments as string[], outlierThreshold);
  const out: Row = { ...report, twoStage: { ...rest, trials, pooled: (twoStage.pooled as Row[]).map(expandPool) } };
  if (isRow(doc.oneStage)) out.oneStage = { ...doc.oneStage, trials: expandOneStageTrials(doc.oneStage.trials) };
  return out;
}

function compactTrials(trials: readonly Row[]): Row {
  // Trial summaries carry every treatment of the network in one order; a pool of a summary file
  // (trial and contrasts only) or anything else unexpected stays row by row.
  if (trials.length === 0 || !trials.every((t) => Array.isArray(t.means) && isRow(t.anova) && isRow(t.diagnostics))) return { trials };
  const treatments = (trials[0].means as Row[]).map((m) => m.treatment as string);
  if (!trials.every((t) => same((t.means as Row[]).map((m) => m.treatment), treatments))) return { trials };
  const diagnostics = trials.map((t) => t.diagnostics as Row);
  const threshold = diagnostics[0].outlierThreshold;
  if (!diagnostics.every((d) => d.outlierThreshold === threshold)) return { trials };
  // Cook's distance threshold is 4 / n (trialSummary.ts); a trial where it is not stays row by row.
  if (!trials.every((t, i) => diagnostics[i].cooksThreshold === 4 / (t.n as number))) return { trials };

  const columns: Row = {};
  for (const f of PLAIN) if (!OPTIONAL.has(f) || trials.some((t) => f in t)) columns[f] = column(trials, f);
  columns.means = Object.fromEntries(MEAN_FIELDS.map((f) => [f, trials.map((t) => (t.means as Row[]).map((m) => m[f]))]));
  const anova = trials.map((t) => t.anova as Row);
  columns.anova = {
    rows: anova.map((a) => (a.rows as Row[]).map((r) => [r.term, r.df, r.f, r.p])),
    residualDf: anova.map((a) => (a.residual as Row).df),
    residualMs: anova.map((a) => (a.residual as Row).ms),
    grandMean: column(anova, 'grandMean'),
    cv: column(anova, 'cv'),
  };
  columns.diagnostics = Object.fromEntries(DIAGNOSTIC_FIELDS.map((f) => [f, column(diagnostics, f)]));
  // sigma = sqrt(residual MS) and cv = 100 sqrt(residual MS) / grand mean, as the trial stage
  // computes them (one correctly rounded operation each, so any reader gets the same doubles):
  // left out where every trial's value is exactly that, and named in `derived`.
  const derived: string[] = [];
  const ms = (a: Row) => (a.residual as Row).ms as number;
  if (trials.every((t, i) => t.sigma === Math.sqrt(ms(anova[i])))) (delete columns.sigma, derived.push('sigma'));
  if (anova.every((a) => a.cv === (100 * Math.sqrt(ms(a))) / (a.grandMean as number))) (delete (columns.anova as Row).cv, derived.push('anova.cv'));
  columns.derived = derived;
  const kept = trials.map((t) => {
    const row: Row = {};
    for (const f of KEPT) if (f in t) row[f] = f === 'contrasts' ? (t.contrasts as Row[]).map(compactContrast) : t[f];
    return row;
  });
  return { treatments, outlierThreshold: threshold, trials: kept, trialColumns: columns };
}

/** `estimable: true` is said by the estimate itself; a contrast not estimable keeps `estimable: false` and its reason. */
function compactContrast(c: Row): Row {
  if (c.estimable !== true) return c;
  const { estimable: _estimable, ...rest } = c;
  return rest;
}

function expandTrials(trials: readonly Row[], columns: Row, treatments: readonly string[], outlierThreshold: unknown): Row[] {
  const means = columns.means as Record<string, unknown[][]>;
  const anova = columns.anova as { rows: unknown[][][]; residualDf: unknown[]; residualMs: unknown[]; grandMean: unknown[]; cv: unknown[] };
  const diagnostics = columns.diagnostics as Record<string, unknown[]>;
  const derived = new Set((columns.derived as string[] | undefined) ?? []);
  return trials.map((t, i) => {
    const ms = anova.residualMs[i] as number;
    const row: Row = { trial: t.trial, site: t.site, year: t.year };
    for (const f of PLAIN) {
      if (!(f in columns)) continue;
      const v = (columns[f] as unknown[])[i];
      if (!(OPTIONAL.has(f) && v === null)) row[f] = v;
    }
    if (derived.has('sigma')) row.sigma = Math.sqrt(ms);
    row.n = t.n;
    row.means = treatments.map((treatment, j) => ({ treatment, ...Object.fromEntries(MEAN_FIELDS.map((f) => [f, means[f][i][j]])) }));
    row.contrasts = (t.contrasts as Row[]).map((c) => ('estimable' in c ? c : { ...c, estimable: true }));
    row.anova = {
      rows: anova.rows[i].map(([term, df, f, p]) => ({ term, df, f, p })),
      residual: { df: anova.residualDf[i], ms: anova.residualMs[i] },
      grandMean: anova.grandMean[i],
      cv: derived.has('anova.cv') ? (100 * Math.sqrt(ms)) / (anova.grandMean[i] as number) : anova.cv[i],
    };
    row.flags = t.flags;
    const d: Row = { maxAbsStudentized: diagnostics.maxAbsStudentized[i], maxCooksDistance: diagnostics.maxCooksDistance[i], outlierThreshold, cooksThreshold: 4 / (t.n as number) };
    for (const f of DIAGNOSTIC_FIELDS) d[f] = diagnostics[f][i];
    row.diagnostics = d;
    return row;
  });
}

/**
 * A pool's tables are already column by column (compactPooled.ts); here the columns another one
 * repeats are left out: the leave-one-out and influence trials (those of `weights`), the influence
 * leverage (the weight share, the same number) and the cumulative count k when it is 1, 2, 3, ...
 */
function compactPool(p: Row): Row {
  const weights = p.weights as Row;
  const s = p.sensitivity as Row | undefined;
  if (!isRow(weights) || !Array.isArray(weights.trial) || !isRow(s)) return p;
  const loo = { ...(s.leaveOneOut as Row) };
  const influence = { ...(s.influence as Row) };
  const cumulative = { ...(s.cumulative as Row) };
  const omitted: string[] = [];
  if (Array.isArray(loo.trial) && same(loo.trial, weights.trial as unknown[])) (delete loo.trial, omitted.push('leaveOneOut.trial'));
  if (Array.isArray(influence.trial) && same(influence.trial, weights.trial as unknown[])) (delete influence.trial, omitted.push('influence.trial'));
  if (Array.isArray(influence.leverage) && same(influence.leverage, weights.share as unknown[])) (delete influence.leverage, omitted.push('influence.leverage'));
  if (Array.isArray(cumulative.k) && (cumulative.k as unknown[]).every((k, i) => k === i + 1)) (delete cumulative.k, omitted.push('cumulative.k'));
  return { ...p, sensitivity: { ...s, leaveOneOut: loo, influence, cumulative, omitted } };
}

function expandPool(p: Row): Row {
  const s = p.sensitivity as Row | undefined;
  if (!isRow(s) || !Array.isArray(s.omitted)) return p;
  const { omitted, ...rest } = s;
  const weights = p.weights as Row;
  const has = (name: string) => (omitted as string[]).includes(name);
  const loo = s.leaveOneOut as Row;
  const influence = s.influence as Row;
  const cumulative = s.cumulative as Row;
  return {
    ...p,
    sensitivity: {
      ...rest,
      leaveOneOut: has('leaveOneOut.trial') ? { trial: weights.trial, ...loo } : loo,
      influence: { ...(has('influence.trial') ? { trial: weights.trial } : {}), ...influence, ...(has('influence.leverage') ? { leverage: weights.share } : {}) },
      cumulative: has('cumulative.k') ? withK(cumulative) : cumulative,
    },
  };
}

function withK(cumulative: Row): Row {
  return { ...cumulative, k: Array.from({ length: (cumulative.trial as unknown[]).length }, (_, i) => i + 1) };
}

/** The one-stage per-trial results: the trial names once, then per contrast one array per field. */
function compactOneStageTrials(trials: unknown): unknown {
  if (!Array.isArray(trials) || trials.length === 0) return trials;
  const rows = trials as Row[];
  const names = (rows[0].contrasts as Row[]).map((c) => c.name);
  if (!rows.every((t) => same((t.contrasts as Row[]).map((c) => c.name), names))) return trials;
  return {
    trial: rows.map((t) => t.trial),
    contrasts: names.map((name, j) => ({ name, ...Object.fromEntries(ONE_STAGE_TRIAL_FIELDS.map((f) => [f, rows.map((t) => (t.contrasts as Row[])[j][f])])) })),
  };
}

function expandOneStageTrials(trials: unknown): unknown {
  if (!isRow(trials)) return trials;
  const names = trials.trial as unknown[];
  const contrasts = trials.contrasts as Row[];
  return names.map((trial, i) => ({
    trial,
    contrasts: contrasts.map((c) => ({ name: c.name, ...Object.fromEntries(ONE_STAGE_TRIAL_FIELDS.map((f) => [f, (c[f] as unknown[])[i]])) })),
  }));
}
