// Trials arranged by site (rows) and year (columns): which site-years were run, at a glance.

export interface MatrixTrialInput {
  readonly id: number;
  readonly label: string;
  readonly site: string;
  readonly year: number;
  readonly design: string;
  readonly flags: readonly unknown[];
}

export interface SiteYearMatrix<T extends MatrixTrialInput> {
  readonly sites: string[];
  readonly years: number[];
  /** cells[i][j]: the trials of sites[i] in years[j] (usually none or one). */
  readonly cells: T[][][];
}

export function siteYearMatrix<T extends MatrixTrialInput>(trials: readonly T[]): SiteYearMatrix<T> {
  const sites = [...new Set(trials.map((t) => t.site))].sort((a, b) => a.localeCompare(b));
  const years = [...new Set(trials.map((t) => t.year))].sort((a, b) => a - b);
  const cells = sites.map(() => years.map((): T[] => []));
  for (const t of trials) cells[sites.indexOf(t.site)][years.indexOf(t.year)].push(t);
  return { sites, years, cells };
}

const DESIGN_SHORT: Record<string, string> = {
  'randomised-blocks': 'RB',
  'completely-randomised': 'CR',
  'latin-square': 'LS',
  'row-column': 'RC',
};

export function designShort(design: string): string {
  return DESIGN_SHORT[design] ?? design.slice(0, 2).toUpperCase();
}
