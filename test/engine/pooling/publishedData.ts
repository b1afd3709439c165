// Published meta-analysis data sets used as worked examples. Each block names where the
// numbers are printed and says which were typed from memory and how they were checked.
import type { PoolingItem } from '../../../src/engine/pooling/types.js';

/**
 * BCG vaccine trials (Colditz et al. 1994, JAMA 271:698-702), as tabulated in
 * van Houwelingen, Arends & Stijnen (2002, Stat Med 21:589-624), Table I, p. 594, and in
 * Viechtbauer (2010, J Stat Softw 36(3)), section 3. Counts: TB positive / negative in the
 * vaccinated group, then in the control group; absolute latitude; year of publication.
 * Typed from memory; rows 1-7 checked against the table reproduced on the metafor
 * project's page for van Houwelingen et al. (2002) (counts, log odds ratios and variances
 * to 4 decimals agree), the rest checked by the published pooled results reproduced below.
 */
export const BCG: readonly { author: string; year: number; tpos: number; tneg: number; cpos: number; cneg: number; ablat: number }[] = [
  { author: 'Aronson', year: 1948, tpos: 4, tneg: 119, cpos: 11, cneg: 128, ablat: 44 },
  { author: 'Ferguson & Simes', year: 1949, tpos: 6, tneg: 300, cpos: 29, cneg: 274, ablat: 55 },
  { author: 'Rosenthal et al (1960)', year: 1960, tpos: 3, tneg: 228, cpos: 11, cneg: 209, ablat: 42 },
  { author: 'Hart & Sutherland', year: 1977, tpos: 62, tneg: 13536, cpos: 248, cneg: 12619, ablat: 52 },
  { author: 'Frimodt-Moller et al', year: 1973, tpos: 33, tneg: 5036, cpos: 47, cneg: 5761, ablat: 13 },
  { author: 'Stein & Aronson', year: 1953, tpos: 180, tneg: 1361, cpos: 372, cneg: 1079, ablat: 44 },
  { author: 'Vandiviere et al', year: 1973, tpos: 8, tneg: 2537, cpos: 10, cneg: 619, ablat: 19 },
  { author: 'TPT Madras', year: 1980, tpos: 505, tneg: 87886, cpos: 499, cneg: 87892, ablat: 13 },
  { author: 'Coetzee & Berjak', year: 1968, tpos: 29, tneg: 7470, cpos: 45, cneg: 7232, ablat: 27 },
  { author: 'Rosenthal et al (1961)', year: 1961, tpos: 17, tneg: 1699, cpos: 65, cneg: 1600, ablat: 42 },
  { author: 'Comstock et al (1974)', year: 1974, tpos: 186, tneg: 50448, cpos: 141, cneg: 27197, ablat: 18 },
  { author: 'Comstock & Webster', year: 1969, tpos: 5, tneg: 2493, cpos: 3, cneg: 2338, ablat: 33 },
  { author: 'Comstock et al (1976)', year: 1976, tpos: 27, tneg: 16886, cpos: 29, cneg: 17825, ablat: 33 },
];

/** Log relative risks and their large-sample SEs (the effect size of Viechtbauer 2010). */
export function bcgLogRiskRatios(): PoolingItem[] {
  return BCG.map((t) => ({
    trial: t.author,
    estimate: Math.log(t.tpos / (t.tpos + t.tneg) / (t.cpos / (t.cpos + t.cneg))),
    se: Math.sqrt(1 / t.tpos - 1 / (t.tpos + t.tneg) + 1 / t.cpos - 1 / (t.cpos + t.cneg)),
    year: t.year,
    covariates: { ablat: t.ablat, year: t.year },
  }));
}

/** Log odds ratios and their SEs (the effect size of van Houwelingen et al. 2002). */
export function bcgLogOddsRatios(): PoolingItem[] {
  return BCG.map((t) => ({
    trial: t.author,
    estimate: Math.log((t.tpos * t.cneg) / (t.tneg * t.cpos)),
    se: Math.sqrt(1 / t.tpos + 1 / t.tneg + 1 / t.cpos + 1 / t.cneg),
    year: t.year,
    covariates: { ablat: t.ablat },
  }));
}

/**
 * Stroke-unit trials, length of hospital stay in days (Normand 1999, Stat Med 18:321-359,
 * Table VIII, p. 351): n, mean and SD of the specialist-care and routine-care groups.
 * Typed from memory; checked in the test against the mean differences and variances
 * printed in that table (to 2 decimals).
 */
export const NORMAND: readonly { trial: string; n1: number; m1: number; sd1: number; n2: number; m2: number; sd2: number }[] = [
  { trial: 'Edinburgh', n1: 155, m1: 55, sd1: 47, n2: 156, m2: 75, sd2: 64 },
  { trial: 'Orpington-Mild', n1: 31, m1: 27, sd1: 7, n2: 32, m2: 29, sd2: 4 },
  { trial: 'Orpington-Moderate', n1: 75, m1: 64, sd1: 17, n2: 71, m2: 119, sd2: 29 },
  { trial: 'Orpington-Severe', n1: 18, m1: 66, sd1: 20, n2: 18, m2: 137, sd2: 48 },
  { trial: 'Montreal-Home', n1: 8, m1: 14, sd1: 8, n2: 13, m2: 18, sd2: 11 },
  { trial: 'Montreal-Transfer', n1: 57, m1: 19, sd1: 7, n2: 52, m2: 18, sd2: 4 },
  { trial: 'Newcastle', n1: 34, m1: 52, sd1: 45, n2: 33, m2: 41, sd2: 34 },
  { trial: 'Umea', n1: 110, m1: 21, sd1: 16, n2: 183, m2: 31, sd2: 27 },
  { trial: 'Uppsala', n1: 60, m1: 30, sd1: 27, n2: 52, m2: 23, sd2: 20 },
];

/** Mean differences with the pooled-SD variance used in Normand (1999), Table VIII. */
export function normandMeanDifferences(): PoolingItem[] {
  return NORMAND.map((t) => {
    const pooledVar = ((t.n1 - 1) * t.sd1 * t.sd1 + (t.n2 - 1) * t.sd2 * t.sd2) / (t.n1 + t.n2 - 2);
    return { trial: t.trial, estimate: t.m1 - t.m2, se: Math.sqrt(pooledVar * (1 / t.n1 + 1 / t.n2)) };
  });
}

/**
 * Teacher expectancy and pupil IQ, 19 studies (Raudenbush 1984; Raudenbush & Bryk 1985,
 * J Educ Stat 10:75-98, Table 1): standardised mean difference, its SE, and weeks of
 * teacher-pupil contact before the expectancy induction. Typed from memory (d to 2
 * decimals, SE to 3 decimals as printed); analysed in Raudenbush (2009), Handbook of
 * Research Synthesis and Meta-Analysis, 2nd ed., ch. 16, Tables 16.2 (p. 301) and 16.3 (p. 309).
 */
export const TEACHER_EXPECTANCY: readonly { d: number; se: number; weeks: number }[] = [
  { d: 0.03, se: 0.125, weeks: 2 },
  { d: 0.12, se: 0.147, weeks: 21 },
  { d: -0.14, se: 0.167, weeks: 19 },
  { d: 1.18, se: 0.373, weeks: 0 },
  { d: 0.26, se: 0.369, weeks: 0 },
  { d: -0.06, se: 0.103, weeks: 3 },
  { d: -0.02, se: 0.103, weeks: 17 },
  { d: -0.32, se: 0.22, weeks: 24 },
  { d: 0.27, se: 0.164, weeks: 0 },
  { d: 0.8, se: 0.251, weeks: 1 },
  { d: 0.54, se: 0.302, weeks: 0 },
  { d: 0.18, se: 0.223, weeks: 0 },
  { d: -0.02, se: 0.289, weeks: 1 },
  { d: 0.23, se: 0.29, weeks: 2 },
  { d: -0.18, se: 0.159, weeks: 17 },
  { d: -0.06, se: 0.167, weeks: 5 },
  { d: 0.3, se: 0.139, weeks: 1 },
  { d: 0.07, se: 0.094, weeks: 2 },
  { d: -0.07, se: 0.174, weeks: 7 },
];

export function teacherExpectancyItems(): PoolingItem[] {
  return TEACHER_EXPECTANCY.map((s, i) => ({ trial: `study ${i + 1}`, estimate: s.d, se: s.se, covariates: { weeksCapped: Math.min(3, s.weeks) } }));
}
