// The trial list as a terminal table.
import type { TrialListing } from '../store/index.js';
import { textTable } from './textTable.js';

export function formatTrials(trials: readonly TrialListing[]): string {
  const rows = trials.map((t) => [String(t.id), t.site, String(t.year), t.design, String(t.plots), String(t.treatments), t.traits.join(' ')]);
  const sites = new Set(trials.map((t) => t.site)).size;
  const years = new Set(trials.map((t) => t.year)).size;
  return `${textTable(['id', 'site', 'year', 'design', 'plots', 'treatments', 'traits'], rows)}\n${trials.length} trials, ${sites} sites, ${years} years\n`;
}
