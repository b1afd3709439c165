// The site-and-trial pooling in the text summary: the regional mean, how the spread splits
// between sites and trials within a site, a new site, and each known site's own estimate with
// the caution that it rests on that site's past trials.
import type { AnyAnalysisReport } from '../../api/analysis/report.js';
import { decimalsFromSe, effectCell, fixed, levelText, percent, pText, rangeText, seText, sig } from './numbers.js';
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
      return [p.name, effectCell(s.estimate, s.lower, s.upper, unit(p.name), s.se), seText(s.se), pText(s.p), String(s.sites), String(s.trials), rangeText(s.newSiteLower, s.newSiteUpper, unit(p.name), decimalsFromSe(s.se)), percent(s.newSiteProbPositive, 1)];
    }),
  );
  const spread = textTable(
    ['contrast', `site tau² (${level} profile)`, `trial-within-site tau² (${level} profile)`, 'I² site', 'I² trial', 'repeatable by site'],
    pooled.map((p) => {
      const s = p.siteLevels!;
      return [p.name, `${sig(s.siteTau2)} (${sig(s.siteTau2Lower)} to ${sig(s.siteTau2Upper)})`, `${sig(s.trialTau2)} (${sig(s.trialTau2Lower)} to ${sig(s.trialTau2Upper)})`, percent(s.I2Site), percent(s.I2Trial), percent(s.siteRepeatability)];
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
    ...section(`Effects pooled with trials nested in sites (${first.method})`, [overview]),
    ...section('Is the spread repeatable by site or seasonal?', [spread, '  repeatable by site = site tau² / (site tau² + trial-within-site tau²)']),
    ...section('Each known site (its past trials shrunk towards the regional mean)', [...bySite, `  Caution: ${first.caution}`]),
    ...(notes.length > 0 ? section('Notes on the site-level pooling', notes) : []),
  ];
}
