// The network's trial table: sorted by site then year, filtered by site, with short words for
// the data-quality flags (the full message goes in the flag's tooltip and screen-reader label).

export interface TrialRowInput {
  readonly id: number;
  readonly label: string;
  readonly site: string;
  readonly year: number;
  readonly flags: readonly { readonly code: string; readonly message: string }[];
}

const FLAG_WORDS: Record<string, string> = {
  'outlier-residual': 'outlier',
  'influential-plot': 'influential plot',
  'unequal-variances': 'unequal variances',
  'spatial-trend': 'field trend',
  'aliased-terms': 'aliased terms',
  'missing-plots': 'missing plots',
  'excluded-plots': 'excluded plots',
  'log-offset-applied': 'log offset',
  'percent-boundary-adjusted': '0/100 % adjusted',
  'treatment-absent': 'treatment absent',
  'no-error-df': 'no error df',
  'transform-unsuited': 'transform unsuited',
  'analysis-failed': 'not analysed',
};

export function flagWord(code: string): string {
  return FLAG_WORDS[code] ?? code.replace(/-/g, ' ');
}

export function sortTrials<T extends TrialRowInput>(rows: readonly T[], siteCode: string | null): T[] {
  return rows
    .filter((r) => siteCode === null || r.site === siteCode)
    .slice()
    .sort((a, b) => a.site.localeCompare(b.site) || a.year - b.year || a.label.localeCompare(b.label));
}

/** Flag codes with how many trials carry each, most frequent first (the summary above the table). */
export function flagCounts(rows: readonly TrialRowInput[]): { code: string; word: string; trials: number }[] {
  const counts = new Map<string, number>();
  for (const r of rows) for (const code of new Set(r.flags.map((f) => f.code))) counts.set(code, (counts.get(code) ?? 0) + 1);
  return [...counts.entries()].sort((a, b) => b[1] - a[1] || a[0].localeCompare(b[0])).map(([code, trials]) => ({ code, word: flagWord(code), trials }));
}

/** A trial's flags grouped by code, in first-seen order (one line per kind on screen). */
export function groupFlags<F extends { readonly code: string; readonly message: string }>(flags: readonly F[]): { code: string; word: string; messages: string[] }[] {
  const groups = new Map<string, string[]>();
  for (const f of flags) groups.set(f.code, [...(groups.get(f.code) ?? []), f.message]);
  return [...groups.entries()].map(([code, messages]) => ({ code, word: flagWord(code), messages }));
}
