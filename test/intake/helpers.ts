// Test helpers: temp files, small plot files, and catching an IntakeError's problems.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll } from 'vitest';
import { IntakeError, type ImportMapping, type IntakeProblem } from '../../src/intake/types.js';

const dirs: string[] = [];

/** A fresh temp directory, removed after the test file finishes. */
export function tempDir(): string {
  const dir = mkdtempSync(join(tmpdir(), 'manyfield-intake-'));
  dirs.push(dir);
  return dir;
}

afterAll(() => {
  for (const d of dirs) rmSync(d, { recursive: true, force: true });
});

let counter = 0;
let shared: string | null = null;

export function writeTemp(name: string, content: string | Uint8Array): string {
  shared ??= tempDir();
  const path = join(shared, `${counter++}-${name}`);
  writeFileSync(path, content);
  return path;
}

/** Runs `f` and returns the problems of the IntakeError it must throw. */
export async function problemsOf(f: () => Promise<unknown> | unknown): Promise<readonly IntakeProblem[]> {
  try {
    await f();
  } catch (e) {
    if (e instanceof IntakeError) return e.problems;
    throw e;
  }
  throw new Error('expected an IntakeError, but the call succeeded');
}

/** The problems as [rule, row, column, value] tuples, for exact comparison. */
export function brief(problems: readonly IntakeProblem[]): [string, number, string | null, string | null][] {
  return problems.map((p) => [p.rule, p.row, p.column, p.value]);
}

export const HEADER = ['site', 'year', 'block', 'trt', 'rate', 'timing', 'yield'];

/** Treatment codes with their factor cells: an untreated control (no timing) and two rates x two timings. */
export const TREATMENTS: readonly (readonly [string, string, string])[] = [
  ['CTL', '', ''],
  ['A1', '40', 'early'],
  ['A2', '80', 'early'],
  ['B1', '40', 'late'],
  ['B2', '80', 'late'],
];

/** Rows of a valid file: sites x years x blocks x treatments, yields from a simple formula. */
export function validRows(sites = ['North', 'South'], years = ['2021', '2022'], blocks = 2): string[][] {
  const rows: string[][] = [];
  let k = 0;
  for (const site of sites) {
    for (const year of years) {
      for (let b = 1; b <= blocks; b++) {
        for (const [code, rate, timing] of TREATMENTS) {
          rows.push([site, year, String(b), code, rate, timing, (5 + ((k * 37) % 23) / 10).toFixed(2)]);
          k++;
        }
      }
    }
  }
  return rows;
}

/** One CSV cell, quoted as RFC 4180 asks when it holds the delimiter, a quote or a line break. */
export function csvCell(text: string, delimiter = ','): string {
  return text.includes(delimiter) || /["\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

export function toCsv(rows: readonly (readonly string[])[], header: readonly string[] = HEADER, delimiter = ',', eol = '\n'): string {
  return [header, ...rows].map((r) => r.map((c) => csvCell(c, delimiter)).join(delimiter)).join(eol) + eol;
}

export const MAPPING: ImportMapping = {
  columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield', factors: { rate: 'rate', timing: 'timing' } },
  trait: { name: 'yield', unit: 't/ha' },
  control: 'CTL',
  factorUnits: { rate: 'kg/ha' },
};

/** Sets one cell of the file by spreadsheet row number (header = row 1). */
export function setCell(rows: string[][], sheetRow: number, column: string, value: string, header: readonly string[] = HEADER): void {
  rows[sheetRow - 2][header.indexOf(column)] = value;
}
