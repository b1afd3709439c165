// Where each effect sits in the crossed model's equations. Shared effects are ordered site by
// site (site intercept, then one treatment-by-site effect per treatment), then the border: year
// effects year by year (intercept, treatment-by-year), the fixed effects (treatments, then years
// in sum-to-zero coding when years are fixed), and last the response. Sites are blocks of the
// arrowhead; years are few, so they sit in its dense border.
import type { CrossedData } from './crossedData.js';
import { CROSSED_TERMS, type CrossedTerm } from './terms.js';

export interface CrossedLayout {
  /** Active terms in CROSSED_TERMS order; theta[k] is the relative sd of terms[k]. */
  readonly terms: readonly CrossedTerm[];
  readonly t: number;
  readonly nSites: number;
  readonly nYears: number;
  readonly yearAsFixed: boolean;
  /** Shared effects per site and per year. */
  readonly bs: number;
  readonly by: number;
  /** Year block of the border, fixed effects, border size (years + fixed + response). */
  readonly q: number;
  readonly p: number;
  readonly border: number;
  /** Index into theta of each term, -1 when absent. */
  readonly at: Readonly<Record<CrossedTerm, number>>;
}

export function crossedLayout(d: CrossedData, random: readonly CrossedTerm[], yearAsFixed: boolean): CrossedLayout {
  const terms = CROSSED_TERMS.filter((t) => random.includes(t));
  const at = Object.fromEntries(CROSSED_TERMS.map((t) => [t, terms.indexOf(t)])) as Record<CrossedTerm, number>;
  const t = d.treatments.length;
  const bs = (at.site >= 0 ? 1 : 0) + (at['treatment-by-site'] >= 0 ? t : 0);
  const by = (at.year >= 0 ? 1 : 0) + (at['treatment-by-year'] >= 0 ? t : 0);
  const nYears = d.years.length;
  const q = nYears * by;
  const p = t + (yearAsFixed ? nYears - 1 : 0);
  return { terms, t, nSites: d.sites.length, nYears, yearAsFixed, bs, by, q, p, border: q + p + 1, at };
}

/**
 * One column of a trial's local design: a multiple `value` of local basis column `row`
 * (0 the trial's ones, 1 + j treatment j's indicator), landing at `index` of its site's block
 * (`inSite`) or of the border.
 */
export interface LocalColumn {
  readonly row: number;
  readonly value: number;
  readonly inSite: boolean;
  readonly index: number;
}

/** The local columns of a trial in site `site`, year `year`, at relative sds theta. */
export function localColumns(L: CrossedLayout, year: number, theta: ArrayLike<number>): LocalColumn[] {
  const cols: LocalColumn[] = [];
  const { at, t } = L;
  let k = 0;
  if (at.site >= 0) cols.push({ row: 0, value: theta[at.site], inSite: true, index: k++ });
  if (at['treatment-by-site'] >= 0) for (let j = 0; j < t; j++) cols.push({ row: 1 + j, value: theta[at['treatment-by-site']], inSite: true, index: k++ });
  let b = year * L.by;
  if (at.year >= 0) cols.push({ row: 0, value: theta[at.year], inSite: false, index: b++ });
  if (at['treatment-by-year'] >= 0) for (let j = 0; j < t; j++) cols.push({ row: 1 + j, value: theta[at['treatment-by-year']], inSite: false, index: b++ });
  for (let j = 0; j < t; j++) cols.push({ row: 1 + j, value: 1, inSite: false, index: L.q + j });
  if (L.yearAsFixed)
    for (let c = 0; c < L.nYears - 1; c++) {
      const value = year === L.nYears - 1 ? -1 : year === c ? 1 : 0;
      if (value !== 0) cols.push({ row: 0, value, inSite: false, index: L.q + t + c });
    }
  return cols;
}
