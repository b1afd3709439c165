// Forest-plot rows from an analysis result: one row per trial that has the contrast, with its
// estimate, interval and pooling weight share; sorted and grouped as the user asks; the trials
// left out with their reason; and the CSV of exactly the numbers drawn.
import type { CsvColumn } from './csv.js';

export interface ForestRow {
  readonly trial: string;
  readonly site: string | null;
  readonly year: number | null;
  readonly estimate: number;
  readonly se: number;
  readonly lower: number;
  readonly upper: number;
  readonly df: number | null;
  /** Share of the pooling weight, 0..1 (null when the trial is not in the pool). */
  readonly weightShare: number | null;
}

/** The parts of a per-trial summary a forest plot reads. */
export interface TrialContrastSource {
  readonly trial: string;
  readonly site?: string | null;
  readonly year?: number | null;
  readonly contrasts: readonly ({ readonly name: string; readonly estimable?: boolean; readonly estimate?: number | null; readonly se?: number | null; readonly df?: number | null; readonly lower?: number | null; readonly upper?: number | null })[];
}

export type ForestSort = 'input' | 'estimate' | 'site' | 'year' | 'weight';
export type ForestGroup = 'none' | 'site' | 'year';

/** Rows for one contrast; a trial whose contrast is not estimable has no row (it is listed as left out). */
export function forestRows(trials: readonly TrialContrastSource[], contrast: string, weights: { readonly trial: readonly string[]; readonly share: readonly number[] } | null): ForestRow[] {
  const share = new Map<string, number>();
  if (weights) for (let i = 0; i < weights.trial.length; i++) share.set(weights.trial[i], weights.share[i]);
  const rows: ForestRow[] = [];
  for (const t of trials) {
    const c = t.contrasts.find((x) => x.name === contrast);
    if (!c || c.estimable === false) continue;
    const { estimate, se, lower, upper } = c;
    if (estimate == null || se == null || lower == null || upper == null) continue;
    rows.push({ trial: t.trial, site: t.site ?? null, year: t.year ?? null, estimate, se, lower, upper, df: c.df ?? null, weightShare: share.get(t.trial) ?? null });
  }
  return rows;
}

function compareText(a: string | null, b: string | null): number {
  return (a ?? '').localeCompare(b ?? '', 'en', { numeric: true });
}

/** Sorted copy; ties keep the input order (a stable sort). */
export function sortForest(rows: readonly ForestRow[], by: ForestSort): ForestRow[] {
  const out = [...rows];
  switch (by) {
    case 'estimate':
      return out.sort((a, b) => a.estimate - b.estimate);
    case 'site':
      return out.sort((a, b) => compareText(a.site, b.site) || (a.year ?? 0) - (b.year ?? 0));
    case 'year':
      return out.sort((a, b) => (a.year ?? 0) - (b.year ?? 0) || compareText(a.site, b.site));
    case 'weight':
      return out.sort((a, b) => (b.weightShare ?? -1) - (a.weightShare ?? -1));
    case 'input':
      return out;
  }
}

export interface ForestGroupBlock {
  readonly label: string | null;
  readonly rows: readonly ForestRow[];
}

/** Groups in order of first appearance after sorting (groups sorted by their label). */
export function groupForest(rows: readonly ForestRow[], by: ForestGroup): ForestGroupBlock[] {
  if (by === 'none') return [{ label: null, rows }];
  const key = (r: ForestRow) => (by === 'site' ? (r.site ?? 'no site') : r.year === null ? 'no year' : String(r.year));
  const groups = new Map<string, ForestRow[]>();
  for (const r of rows) {
    const k = key(r);
    const g = groups.get(k);
    if (g) g.push(r);
    else groups.set(k, [r]);
  }
  return [...groups.entries()].sort((a, b) => compareText(a[0], b[0])).map(([label, rs]) => ({ label: `${by === 'site' ? 'Site' : 'Year'} ${label}`, rows: rs }));
}

/** The flat row order drawn (groups one after another). */
export function arrangeForest(rows: readonly ForestRow[], sort: ForestSort, group: ForestGroup): ForestGroupBlock[] {
  return groupForest(sortForest(rows, sort), group);
}

export const FOREST_CSV: readonly CsvColumn<ForestRow>[] = [
  { header: 'trial', value: (r) => r.trial },
  { header: 'site', value: (r) => r.site },
  { header: 'year', value: (r) => r.year },
  { header: 'estimate', value: (r) => r.estimate },
  { header: 'se', value: (r) => r.se },
  { header: 'df', value: (r) => r.df },
  { header: 'lower', value: (r) => r.lower },
  { header: 'upper', value: (r) => r.upper },
  { header: 'weight_share', value: (r) => r.weightShare },
];

/** A left-out line such as "T07: treatment A4 missing" split into trial and reason where it can be. */
export function leftOutEntries(lines: readonly string[]): { trial: string; reason: string }[] {
  return lines.map((l) => {
    const m = /^([^:]+):\s*(.*)$/.exec(l);
    return m ? { trial: m[1].trim(), reason: m[2].trim() } : { trial: '', reason: l };
  });
}
