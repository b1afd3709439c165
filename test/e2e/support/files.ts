// Plot files written by the tests: a good one (new sites, the demo's protocol), one with known
// errors at known rows and columns, and a large one (1,000 trials) for the long import.
import { writeFileSync } from 'node:fs';

export const TREATMENTS = [
  { code: 'CTL', rate: 0, timing: '' },
  { code: 'A1', rate: 40, timing: 'early' },
  { code: 'A2', rate: 80, timing: 'early' },
  { code: 'A4', rate: 160, timing: 'early' },
  { code: 'B1', rate: 40, timing: 'late' },
  { code: 'B2', rate: 80, timing: 'late' },
  { code: 'B4', rate: 160, timing: 'late' },
] as const;

export const HEADER = ['site', 'year', 'block', 'treatment', 'rate', 'timing', 'yield (t/ha)'];

/** A small deterministic generator (the file must be the same on every run). */
function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

export function plotRows(sites: readonly string[], years: readonly number[], blocks: number, seed = 7): string[][] {
  const rand = lcg(seed);
  const rows: string[][] = [];
  for (const site of sites)
    for (const year of years)
      for (let b = 1; b <= blocks; b++)
        for (const t of TREATMENTS) {
          const y = 4 + 1.2 * (1 - Math.exp(-t.rate / 60)) + 0.4 * (rand() - 0.5) + 0.1 * b;
          rows.push([site, String(year), String(b), t.code, String(t.rate), t.timing, y.toFixed(3)]);
        }
  return rows;
}

export function writeCsv(path: string, rows: readonly (readonly string[])[]): void {
  writeFileSync(path, [HEADER, ...rows].map((r) => r.join(',')).join('\n') + '\n');
}

/** Two new trials at a new site (ZEL, 2024 and 2025). */
export function writeGoodFile(path: string): void {
  writeCsv(path, plotRows(['ZEL'], [2024, 2025], 4));
}

/**
 * The same file with three known errors. Spreadsheet rows count the header as row 1, so the
 * data row at index i sits on row i + 2.
 */
export function writeBadFile(path: string): { row: number; column: string; value: string }[] {
  const rows = plotRows(['ZEL'], [2024, 2025], 4);
  rows[4][6] = 'eight';
  rows[10][3] = '';
  rows[17][1] = 'twenty';
  writeCsv(path, rows);
  return [
    { row: 6, column: 'yield (t/ha)', value: 'eight' },
    { row: 12, column: 'treatment', value: '' },
    { row: 19, column: 'year', value: 'twenty' },
  ];
}

/**
 * 1,000 trials: 250 sites over 4 years, the 7 treatments in 40 blocks (280,000 plot rows, about
 * 8 MB): large enough that the import runs for seconds, so progress can be watched and cancelled.
 */
export function writeThousandTrials(path: string, blocks = 40): number {
  const sites = Array.from({ length: 250 }, (_, i) => `S${String(i + 1).padStart(3, '0')}`);
  const rows = plotRows(sites, [2021, 2022, 2023, 2024], blocks, 11);
  writeCsv(path, rows);
  return sites.length * 4;
}
