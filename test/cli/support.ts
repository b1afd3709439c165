// Helpers for the command tests of a new user's network: files in a temp folder, JSON reports,
// and the analyses a workspace holds.
import { createHash } from 'node:crypto';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { manyfield, type CliRun } from '../support/cli.js';
import { expandAnalysisJson } from '../../src/cli/analysisJson.js';

export interface Report {
  twoStage: {
    trials: {
      trial: string;
      flags: { code: string; message: string; label?: string | null; plotId?: string | number | null }[];
      excluded: { label: string | null; reason: string; plotId: string | number | null }[];
      missing: { label: string | null }[];
      contrasts: { name: string; estimate?: number | null; se?: number | null }[];
    }[];
    pooled: { name: string; estimate: number; se: number; meaning: string; k: number }[];
  };
  warnings: string[];
}

export function writeJson(dir: string, name: string, value: unknown): string {
  const path = join(dir, name);
  writeFileSync(path, JSON.stringify(value));
  return path;
}

export function analyzeJson(args: readonly string[]): { run: CliRun; report: Report } {
  const run = manyfield(['analyze', ...args, '--json']);
  if (run.status !== 0) throw new Error(`analyze failed (${run.status}): ${run.stderr}`);
  // The default document is in columns (src/cli/analysisJson.ts): read back as the report.
  return { run, report: expandAnalysisJson(JSON.parse(run.stdout)) as Report };
}

export function storedAnalyses(workspace: string): number {
  const db = new Database(workspace, { readonly: true, fileMustExist: true });
  try {
    return (db.prepare('SELECT COUNT(*) AS n FROM analysis').get() as { n: number }).n;
  } finally {
    db.close();
  }
}

export function fileHash(path: string): string {
  return createHash('sha256').update(readFileSync(path)).digest('hex');
}

export function pooledOf(report: Report, name: string): Report['twoStage']['pooled'][number] {
  const p = report.twoStage.pooled.find((x) => x.name === name);
  if (!p) throw new Error(`no pooled contrast "${name}"`);
  return p;
}
