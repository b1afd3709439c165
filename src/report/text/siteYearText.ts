// The one-stage model with sites and years, as a committee reads it: how the response to
// treatment varies between sites, between years and between site-years; how much of it is
// repeatable at a site; a new site in a new year; and next year at each known site, with the
// caution that it rests on that site's past years.
import type { AnyAnalysisReport } from '../../api/analysis/report.js';
import { decimalsFromSe, fixed, levelText, percent, probabilityText, rangeText, seText, sig } from './numbers.js';
import { section, textTable } from './table.js';

/** Sites listed per contrast in the text (the JSON has them all). */
const SITES_SHOWN = 30;

const PART_WORDS = { site: 'between sites (repeatable at a site)', year: 'between years (shared by all sites in a season)', 'site-year': 'between site-years (neither)' } as const;

export function siteYearLines(r: AnyAnalysisReport): string[] {
  const v = r.oneStage?.siteYearView;
  if (!v) return [];
  const level = levelText(r.settings.confidence);
  const unit = (name: string) => r.contrastUnits[name] ?? null;
  const split = textTable(
    ['response to treatment varies', 'variance', `${level} interval`, 'share'],
    v.split.map((s) => [
      PART_WORDS[s.part],
      s.variance === null ? 'not in the model' : sig(s.variance, 4),
      s.intervalMethod === 'none' ? '-' : `${sig(s.lower)} to ${sig(s.upper)} (${s.intervalMethod === 'profile-likelihood' ? 'profile' : 'Wald, log scale'})`,
      percent(s.share),
    ]),
  );
  const repeat = `  Repeatable at a site: ${v.siteRepeatability === null ? 'not estimated (no treatment × site term)' : percent(v.siteRepeatability)} of the variation in response belongs to the site (${v.sites} sites, ${v.years} years).`;
  const se = (name: string) => r.oneStage?.contrasts.find((c) => c.name === name)?.se ?? null;
  const threshold = r.settings.threshold;
  const newSite = textTable(
    ['contrast', 'estimate', `new site, new year (${level} prediction interval)`, 'method', 'P(effect > 0)', ...(threshold !== 0 ? [`P(effect > ${sig(threshold)})`] : []), 'plug-in t interval (t df)'],
    v.contrasts.map((c) => {
      const n = c.newSiteNewYear;
      const d = decimalsFromSe(se(c.name));
      return [
        c.name,
        c.estimate === null ? 'not estimable' : fixed(c.estimate, d + 1),
        n ? rangeText(n.lower, n.upper, unit(c.name), d) : '-',
        n?.method ?? (n ? 'plug-in-t' : '-'),
        probabilityText(n?.probPositive),
        ...(threshold !== 0 ? [probabilityText(n?.probAboveThreshold)] : []),
        n ? `${rangeText(n.plugInT?.lower ?? n.lower, n.plugInT?.upper ?? n.upper, null, d)} (${n.df})` : '-',
      ];
    }),
  );
  const bySite = v.contrasts.flatMap((c) => {
    if (c.nextYearAtSite.length === 0) return [];
    const d = decimalsFromSe(se(c.name));
    const rows = c.nextYearAtSite.slice(0, SITES_SHOWN).map((s) => [s.site, String(s.pastYears.length), fixed(s.estimate, d + 1), seText(s.predictionSe), rangeText(s.lower, s.upper, unit(c.name), d)]);
    const more = c.nextYearAtSite.length > SITES_SHOWN ? [`  … ${c.nextYearAtSite.length - SITES_SHOWN} more sites in the JSON (oneStage.siteYearView)`] : [];
    return [`  ${c.name}:`, textTable(['site', 'past years', 'site estimate', 'prediction SE', `next year there (${level})`], rows), ...more];
  });
  return [
    ...section('Is the response repeatable by site or seasonal? (one-stage, sites and years)', [split, repeat, newSite, `  ${v.method}`]),
    ...(bySite.length > 0 ? section('Next year at each known site (one-stage)', [...bySite, `  Caution: ${v.caution}`]) : []),
  ];
}
