// The site-and-trial pooling in the text summary: the regional mean, how the spread splits
// between sites and trials within a site, a new site, and each known site's own estimate with
// the caution that it rests on that site's past trials.
import type { AnyAnalysisReport } from '../../api/analysis/report.js';
import { decimalsFromSe, effectCell, fixed, levelText, percent, probabilityText, pText, rangeText, seText, sig } from './numbers.js';
import { section, textTable } from './table.js';

/** Sites listed per contrast in the text (the JSON has them all). */
const SITES_SHOWN = 30;

export function siteLevelLines(r: AnyAnalysisReport): string[] {
  const pooled = r.twoStage.pooled.filter((p) => p.siteLevels);
  if (pooled.length === 0) return [];
  const level = levelText(r.settings.confidence);
  const unit = (name: string) => r.contrastUnits[name] ?? null;
  const overview = textTable(
    ['contrast', `regional mean (${level} interval)`, 'SE', 'p', 'sites', 'trials', `new site (${level} prediction interval)`, 'P(effect > 0)'],
    pooled.map((p) => {
      const s = p.siteLevels!;
      return [p.name, effectCell(s.estimate, s.lower, s.upper, unit(p.name), s.se), seText(s.se), pText(s.p), String(s.sites), String(s.trials), rangeText(s.newSiteLower, s.newSiteUpper, unit(p.name), decimalsFromSe(s.se)), probabilityText(s.newSiteProbPositive)];
    }),
  );
  const methodOf = pooled.map((p) => p.siteLevels!.newSitePrediction).find((n) => n);
  const predictionLines = methodOf
    ? [
        `  new site: ${methodOf.description}`,
        ...pooled.flatMap((p) => {
          const n = p.siteLevels!.newSitePrediction;
          return n && n.method !== 'plug-in-t' ? [`  ${p.name}: the plug-in t interval would be ${rangeText(n.plugInT.lower, n.plugInT.upper, unit(p.name), decimalsFromSe(p.siteLevels!.se))}`] : [];
        }),
      ]
    : [];
  const withYear = pooled.some((p) => p.siteLevels!.yearTau2 !== null);
  const withInterval = (x: number | null, lo: number | null, hi: number | null) => `${sig(x)} (${sig(lo)} to ${sig(hi)})`;
  const spread = textTable(
    ['contrast', `site tau² (${level} profile)`, ...(withYear ? [`year tau² (${level} profile)`] : []), `trial-within-site tau² (${level} profile)`, 'I² site', ...(withYear ? ['I² year'] : []), 'I² trial', 'repeatable by site'],
    pooled.map((p) => {
      const s = p.siteLevels!;
      return [
        p.name,
        withInterval(s.siteTau2, s.siteTau2Lower, s.siteTau2Upper),
        ...(withYear ? [withInterval(s.yearTau2, s.yearTau2Lower, s.yearTau2Upper)] : []),
        withInterval(s.trialTau2, s.trialTau2Lower, s.trialTau2Upper),
        percent(s.I2Site),
        ...(withYear ? [percent(s.I2Year)] : []),
        percent(s.I2Trial),
        percent(s.siteRepeatability),
      ];
    }),
  );
  const bySite = pooled.flatMap((p) => {
    const s = p.siteLevels!;
    if (s.siteEstimates.length === 0) return [];
    const d = decimalsFromSe(s.se);
    const rows = s.siteEstimates.slice(0, SITES_SHOWN).map((e) => [e.site, String(e.trials), fixed(e.ownMean, d + 1), fixed(e.estimate, d + 1), seText(e.se), rangeText(e.nextTrialLower, e.nextTrialUpper, unit(p.name), d)]);
    const more = s.siteEstimates.length > SITES_SHOWN ? [`  … ${s.siteEstimates.length - SITES_SHOWN} more sites in the JSON (siteLevels.siteEstimates)`] : [];
    return [`  ${p.name}:`, textTable(['site', 'trials', 'own mean', 'shrunken', 'SE', `next trial there (${level})`], rows), ...more];
  });
  const notes = pooled.flatMap((p) => p.siteLevels!.notes.map((n) => `  ${p.name}: ${n}`));
  const first = pooled[0].siteLevels!;
  return [
    ...section(`Effects pooled with trials nested in sites${withYear ? ', crossed with years' : ''} (${first.method})`, [overview, ...predictionLines]),
    ...section('Is the spread repeatable by site or seasonal?', [spread, `  repeatable by site = site tau² / (site tau² + ${withYear ? 'year tau² + ' : ''}trial-within-site tau²)`]),
    ...(bySite.length > 0 ? section('Each known site (its past trials shrunk towards the regional mean)', [...bySite, `  Caution: ${first.caution}`]) : []),
    ...(notes.length > 0 ? section('Notes on the site-level pooling', notes) : []),
  ];
}
