// The demo network: an invented regional programme (the "Orrin Valley Nitrogen Network")
// testing one nitrogen input at three unequally spaced rates and two timings against an
// untreated control. Every name and number here is invented; the stated model below is what
// generateDemoNetwork draws from, and its true values are stored in the workspace so users
// and tests can check that analyses recover them.

export const DEMO_SEED = 20261201;
/** Mixed into the seed for the year, treatment-by-site and treatment-by-year draws. */
export const SITE_YEAR_STREAM = 0x5a17e;
export const DEMO_NETWORK_NAME = 'Orrin Valley Nitrogen Network (invented demo)';
export const DEMO_PROTOCOL = 'ON-N rate x timing';
export const DEMO_YEARS = [2023, 2024, 2025] as const;

export interface DemoSite {
  readonly code: string;
  readonly name: string;
  readonly region: string;
  readonly lat: number;
  readonly lon: number;
  readonly soilPh: number;
  readonly organicMatter: number; // %
  readonly rainfallNormal: number; // mm, long-term growing-season mean
}

export const DEMO_SITES: readonly DemoSite[] = [
  { code: 'ASH', name: 'Ashby Flat', region: 'North', lat: -33.41, lon: 147.12, soilPh: 6.1, organicMatter: 2.1, rainfallNormal: 420 },
  { code: 'BRN', name: 'Brennock Hill', region: 'North', lat: -33.62, lon: 147.48, soilPh: 5.4, organicMatter: 3.2, rainfallNormal: 510 },
  { code: 'CAL', name: 'Calder Plains', region: 'North', lat: -33.9, lon: 146.95, soilPh: 7.2, organicMatter: 1.6, rainfallNormal: 360 },
  { code: 'DUN', name: 'Dunmore Creek', region: 'Central', lat: -34.15, lon: 147.3, soilPh: 6.6, organicMatter: 2.8, rainfallNormal: 480 },
  { code: 'ELS', name: 'Elswick', region: 'Central', lat: -34.3, lon: 147.71, soilPh: 5.9, organicMatter: 3.9, rainfallNormal: 560 },
  { code: 'FAR', name: 'Farrow Downs', region: 'Central', lat: -34.52, lon: 146.88, soilPh: 7.8, organicMatter: 1.3, rainfallNormal: 340 },
  { code: 'GLN', name: 'Glenbrook', region: 'Central', lat: -34.61, lon: 147.55, soilPh: 6.3, organicMatter: 2.5, rainfallNormal: 455 },
  { code: 'HAR', name: 'Harlow Ridge', region: 'South', lat: -34.95, lon: 147.2, soilPh: 5.2, organicMatter: 4.4, rainfallNormal: 610 },
  { code: 'INC', name: 'Inchmore', region: 'South', lat: -35.08, lon: 147.82, soilPh: 6.8, organicMatter: 2.2, rainfallNormal: 430 },
  { code: 'JES', name: 'Jessop Bend', region: 'South', lat: -35.25, lon: 146.99, soilPh: 6.0, organicMatter: 3.0, rainfallNormal: 520 },
  { code: 'KEL', name: 'Kelso Marsh', region: 'South', lat: -35.4, lon: 147.41, soilPh: 5.6, organicMatter: 3.6, rainfallNormal: 575 },
  { code: 'LRK', name: 'Larkfield', region: 'West', lat: -34.2, lon: 146.4, soilPh: 7.5, organicMatter: 1.5, rainfallNormal: 330 },
  { code: 'MRW', name: 'Marrow Gap', region: 'West', lat: -34.55, lon: 146.3, soilPh: 6.9, organicMatter: 1.9, rainfallNormal: 385 },
  { code: 'NTH', name: 'Northam Vale', region: 'West', lat: -34.88, lon: 146.52, soilPh: 6.4, organicMatter: 2.6, rainfallNormal: 445 },
];

/** Treatments: untreated control plus rates 40, 80, 160 kg N/ha (unequally spaced) at two timings. */
export const DEMO_TREATMENTS = [
  { code: 'CTL', label: 'Untreated control', rate: 0, timing: null },
  { code: 'A1', label: '40 kg N/ha at sowing', rate: 40, timing: 'early' },
  { code: 'A2', label: '80 kg N/ha at sowing', rate: 80, timing: 'early' },
  { code: 'A4', label: '160 kg N/ha at sowing', rate: 160, timing: 'early' },
  { code: 'B1', label: '40 kg N/ha at stem elongation', rate: 40, timing: 'late' },
  { code: 'B2', label: '80 kg N/ha at stem elongation', rate: 80, timing: 'late' },
  { code: 'B4', label: '160 kg N/ha at stem elongation', rate: 160, timing: 'late' },
] as const;

/**
 * The stated model for grain yield (t/ha) of plot p of treatment j in block b of trial t
 * at site s:
 *   y = mu + site_s + year_y + trial_t + block_tb + gain_t(rate_j * efficiency(timing_j))
 *       + ts_sj + ty_yj + tt_tj + columnTrend_t * (col - mean col) + e,   e ~ N(0, sigma_t^2)
 *   year_y ~ N(0, yearSd^2) per year; ts_sj ~ N(0, treatmentBySiteSd^2) per site and treatment
 *   (the part of the response that repeats at a site); ty_yj ~ N(0, treatmentByYearSd^2) per
 *   year and treatment (the part shared by all sites in a season). These three come from a
 *   stream of their own (seed xor SITE_YEAR_STREAM), so the other draws stay as they were.
 *   gain_t(x) = Gmax_t * (1 - exp(-c * x)),
 *   Gmax_t = gmaxMean + gmaxRain * (rain_t - 450)/100 + gmaxOm * (OM_s - 2.5) + N(0, gmaxSd^2)
 * Protein (%): 10.4 + proteinSlope * rate * efficiency + N(0, 0.5^2) per trial + N(0, 0.12^2)
 *   per block + N(0, 0.3^2) per plot.
 */
export const DEMO_MODEL = {
  mu: 4.2,
  siteSd: 0.6,
  trialSd: 0.5,
  blockSd: 0.18,
  treatmentByTrialSd: 0.12,
  yearSd: 0.35,
  treatmentBySiteSd: 0.3,
  treatmentByYearSd: 0.1,
  gmaxMean: 1.9,
  gmaxRain: 0.35,
  gmaxOm: -0.25,
  gmaxSd: 0.3,
  curvature: 0.018, // c, per kg N/ha
  efficiency: { early: 1.0, late: 0.8 } as Record<string, number>,
  sigmaMedian: 0.38,
  sigmaLogSd: 0.35,
  proteinBase: 10.4,
  proteinSlope: 0.011,
  proteinTrialSd: 0.5,
  proteinBlockSd: 0.12,
  proteinSigma: 0.3,
  blocks: 4,
  outlierShift: 3.2, // t/ha added to one plot
  columnTrendPerColumn: 0.3, // t/ha per column in the trend trial
  /** Suggested price ratio: 1.25 currency/kg N over 260 currency/t grain, in t grain per kg N. */
  priceRatio: 1.25 / 260,
} as const;
