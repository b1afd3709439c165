// An invented network coded by level number with the amount applied at each site, as regional
// programmes often record it: N0 (untreated control), N1–N3 applied early and N2L applied late at
// the N2 amount; each site's amounts differ (wider at some sites), one site dropped N3, the second
// year added a site. Invented data for simulation tests; numbers are checked against R or against
// another path of the program on this file, never against values copied from our own output.
import { mulberry32 } from '../../src/engine/stats/random.js';

/** Amounts of N1, N2, N3 at each site (kg/ha); the control gets none. */
export const SITE_AMOUNTS: Readonly<Record<string, readonly [number, number, number]>> = {
  S1: [40, 80, 120],
  S2: [50, 100, 150],
  S3: [60, 120, 180],
  S4: [40, 80, 120],
  S5: [30, 90, 150],
};

export const YEARS: Readonly<Record<number, readonly string[]>> = { 2021: ['S1', 'S2', 'S3', 'S4'], 2022: ['S1', 'S2', 'S3', 'S4', 'S5'] };

/** Trials (site-year) that dropped a treatment. */
export const DROPPED_AMOUNTS: Readonly<Record<string, readonly string[]>> = { 'S2-2022': ['N3'] };

export function siteAmountsCsv(seed: number): string {
  const u = mulberry32(seed);
  const normal = (): number => Math.sqrt(-2 * Math.log(u() + 1e-12)) * Math.cos(2 * Math.PI * u());
  const lines = ['site,year,block,plot,trt,rate,timing,y'];
  // Written site by site, year by year: the order a workspace lists its trials in.
  for (const site of Object.keys(SITE_AMOUNTS)) {
    for (const year of Object.keys(YEARS).filter((y) => YEARS[Number(y)].includes(site))) {
      const [a1, a2, a3] = SITE_AMOUNTS[site];
      const treatments: [string, number, string][] = [['N0', 0, ''], ['N1', a1, 'early'], ['N2', a2, 'early'], ['N3', a3, 'early'], ['N2L', a2, 'late']];
      const kept = treatments.filter(([code]) => !(DROPPED_AMOUNTS[`${site}-${year}`] ?? []).includes(code));
      const level = 6 + 0.8 * normal();
      const gain = 3 + 0.5 * normal();
      for (let block = 1; block <= 4; block++) {
        const blockEffect = 0.3 * normal();
        kept.forEach(([code, rate, timing], k) => {
          const x = rate * (timing === 'late' ? 1.15 : 1);
          const y = level + gain * (1 - Math.exp(-0.012 * x)) + blockEffect + 0.35 * normal();
          lines.push(`${site},${year},${block},${block * 100 + k + 1},${code},${rate},${timing},${y.toFixed(6)}`);
        });
      }
    }
  }
  return `${lines.join('\n')}\n`;
}

/** Columns of that file, for a spec (`analyze --data`) or an import mapping. */
export const SITE_AMOUNTS_COLUMNS = { site: 'site', year: 'year', block: 'block', plot: 'plot', treatment: 'trt', response: 'y', factors: { rate: 'rate', timing: 'timing' } };
