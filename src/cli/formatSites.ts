// Sites and exclusions as terminal tables.
import type { SiteEntry } from '../api/workspace/sites.js';
import type { ExclusionEntry } from '../api/plots/exclusions.js';
import { num, textTable } from './textTable.js';

export function formatSites(sites: readonly SiteEntry[]): string {
  const names = [...new Set(sites.flatMap((s) => Object.keys(s.covariates)))].sort();
  const header = ['code', 'name', 'region', 'lat', 'lon', 'trials', 'years', ...names.map((n) => {
    const unit = sites.map((s) => s.covariates[n]?.unit).find((u) => u);
    return unit ? `${n} (${unit})` : n;
  })];
  const rows = sites.map((s) => [
    s.code,
    s.name,
    s.region ?? '-',
    s.lat === null ? '-' : String(s.lat),
    s.lon === null ? '-' : String(s.lon),
    String(s.trials),
    s.years.join(' '),
    ...names.map((n) => {
      const c = s.covariates[n];
      return c === undefined ? '-' : typeof c.value === 'number' ? num(c.value) : c.value;
    }),
  ]);
  return `${textTable(header, rows)}\n${sites.length} sites\n`;
}

export function formatExclusions(list: readonly ExclusionEntry[]): string {
  if (list.length === 0) return 'No plots are excluded.\n';
  const rows = list.map((e) => [String(e.plot), e.trialLabel, e.reason]);
  return `${textTable(['plot', 'trial', 'reason'], rows)}\n${list.length} plot(s) excluded\n`;
}
