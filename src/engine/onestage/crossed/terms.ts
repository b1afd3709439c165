// The random terms of the crossed one-stage model (sites and years beside the site-year trial),
// in the order the fitter keeps its relative standard deviations.
export const CROSSED_TERMS = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'] as const;
export type CrossedTerm = (typeof CROSSED_TERMS)[number];

/** Terms only the crossed fitter handles: naming one of them (or fixed years) routes the fit there. */
export const SITE_YEAR_TERMS: readonly CrossedTerm[] = ['site', 'year', 'treatment-by-site', 'treatment-by-year'];

export function needsCrossedFit(random: readonly string[], yearAsFixed: boolean): boolean {
  return yearAsFixed || random.some((t) => (SITE_YEAR_TERMS as readonly string[]).includes(t));
}
