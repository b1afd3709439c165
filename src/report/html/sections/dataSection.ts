// The data: how many sites, years, trials and plots; a map of the sites; trials per year;
// exclusions with their reasons; the data-quality flags raised by the per-trial checks.
import { esc, num, table, type Section } from '../markup.js';
import { trialSummaries, type ReportInput, type ReportSite } from '../reportInput.js';

/** A plain scatter of site positions (longitude across, latitude up), labelled by code. */
export function siteMapSvg(sites: readonly ReportSite[], width = 520, height = 300): string | null {
  const placed = sites.filter((s) => s.lat !== null && s.lon !== null) as (ReportSite & { lat: number; lon: number })[];
  if (placed.length === 0) return null;
  const lons = placed.map((s) => s.lon);
  const lats = placed.map((s) => s.lat);
  const [x0, x1, y0, y1] = [Math.min(...lons), Math.max(...lons), Math.min(...lats), Math.max(...lats)];
  const pad = 40;
  const sx = (v: number) => (x1 === x0 ? width / 2 : pad + ((v - x0) / (x1 - x0)) * (width - 2 * pad));
  const sy = (v: number) => (y1 === y0 ? height / 2 : height - pad - ((v - y0) / (y1 - y0)) * (height - 2 * pad));
  const marks = placed
    .map((s) => {
      const r = 3 + Math.sqrt(s.trials) * 1.5;
      return `<g><title>${esc(s.name)} (${esc(s.code)}): ${s.trials} trial${s.trials === 1 ? '' : 's'}</title><circle cx="${sx(s.lon).toFixed(1)}" cy="${sy(s.lat).toFixed(1)}" r="${r.toFixed(1)}" fill="#23507a" fill-opacity="0.75" stroke="#14181f" stroke-width="0.6"/><text x="${(sx(s.lon) + r + 2).toFixed(1)}" y="${(sy(s.lat) + 4).toFixed(1)}" font-size="10">${esc(s.code)}</text></g>`;
    })
    .join('');
  return `<svg xmlns="http://www.w3.org/2000/svg" class="site-map" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" role="img" aria-label="Map of the sites" font-family="system-ui, 'DejaVu Sans', sans-serif"><rect x="0.5" y="0.5" width="${width - 1}" height="${height - 1}" fill="#f7f6f2" stroke="#c9c6bd"/>${marks}<text x="${width / 2}" y="${height - 8}" font-size="10" text-anchor="middle" fill="#5b6470">longitude ${x0.toFixed(2)} to ${x1.toFixed(2)}; latitude ${y0.toFixed(2)} to ${y1.toFixed(2)}; circle area grows with the number of trials</text></svg>`;
}

const FLAG_WORDS: Record<string, string> = {
  'outlier-residual': 'a plot far from its fitted value (studentised residual beyond the threshold)',
  'unequal-variances': 'unequal spread of residuals across treatments',
  'spatial-trend': 'a residual trend along rows or columns',
  'aliased-terms': 'model terms that the layout cannot separate',
  'missing-plots': 'plots without a value',
  'excluded-plots': 'plots excluded with a recorded reason',
  'treatment-absent': 'a treatment of the protocol not tested in the trial',
};

export function dataSection(input: ReportInput): Section {
  const a = input.analysis;
  const trials = trialSummaries(a);
  const years = [...new Set(trials.map((t) => t.entry.year).filter((y): y is number => y !== null))].sort();
  const sites = new Set(trials.map((t) => t.entry.site));
  const plots = trials.reduce((s, t) => s + t.entry.n, 0);
  const excludedCount = trials.reduce((s, t) => s + t.entry.excluded, 0);
  const missing = trials.reduce((s, t) => s + t.entry.missing, 0);
  const parts: string[] = [];
  parts.push(
    `<p>The analysis used <b>${num('trialsAnalysed', a.trialsAnalysed, 0)}</b> trials at <b>${sites.size}</b> sites over ${years.length} year${years.length === 1 ? '' : 's'} (${years.join(', ')}), ${plots.toLocaleString('en-GB')} plots in all; ${excludedCount} plot${excludedCount === 1 ? ' was' : 's were'} excluded and ${missing} had no value for ${esc(a.trait)}.</p>`,
  );
  const map = siteMapSvg(input.sites.filter((s) => sites.has(s.code)));
  if (map) parts.push(`<figure class="chart">${map}<figcaption>Figure: the sites of the network.</figcaption></figure>`);
  const designs = new Map<string, number>();
  for (const t of trials) designs.set(t.entry.design, (designs.get(t.entry.design) ?? 0) + 1);
  const byYear = years.map((y) => [String(y), String(trials.filter((t) => t.entry.year === y).length), String(trials.filter((t) => t.entry.year === y).reduce((s, t) => s + t.entry.n, 0))]);
  parts.push('<h3>Trials by year</h3>', table(['Year', 'Trials', 'Plots used'], byYear, 'narrow'));
  parts.push(`<p>Designs: ${[...designs].map(([d, n]) => `${esc(d)} (${n})`).join(', ')}.</p>`);
  parts.push('<h3>Exclusions</h3>');
  if (input.exclusions.length === 0) parts.push('<p>No plot was excluded.</p>');
  else {
    const shown = input.exclusions.slice(0, 60);
    parts.push(table(['Trial', 'Plot', 'Reason', 'Recorded in'], shown.map((e) => [esc(e.trial), esc(e.plot), esc(e.reason), e.source === 'spec' ? 'the spec' : 'the workspace'])));
    if (input.exclusions.length > shown.length) parts.push(`<p>${input.exclusions.length - shown.length} more exclusions are listed by <code>manyfield exclusions</code>.</p>`);
  }
  parts.push('<h3>Data-quality flags</h3>');
  const flagCounts = new Map<string, Set<string>>();
  for (const t of trials) for (const f of t.entry.flags) {
    const kind = f.code;
    if (!flagCounts.has(kind)) flagCounts.set(kind, new Set());
    flagCounts.get(kind)!.add(t.entry.trial);
  }
  const influential = trials.filter((t) => t.entry.diagnostics.influentialPlots > 0).length;
  const rows = [...flagCounts].map(([k, s]) => [esc(k), esc(FLAG_WORDS[k] ?? ''), String(s.size), esc([...s].slice(0, 6).join(', ') + (s.size > 6 ? ', …' : ''))]);
  rows.push(['influential plots', "Cook's distance above 4/n (counted, usual in small trials)", String(influential), '']);
  parts.push(table(['Flag', 'Meaning', 'Trials', 'Examples'], rows));
  return { id: 'data', title: 'The data', html: parts.join('\n'), newPage: true };
}
