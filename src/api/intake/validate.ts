// Checks a data file against a mapping exactly as an import would read it, and against the
// workspace it would go into (the same file already imported, trials already there), without
// storing anything: the workspace is only read.
import { existsSync } from 'node:fs';
import { basename } from 'node:path';
import { readPlotFile } from '../../intake/index.js';
import { IntakeError, type ImportMapping, type IntakeProblem, type ParsedPlotTable } from '../../intake/types.js';
import { openWorkspace } from '../../store/index.js';
import type { CallContext } from '../context.js';

export interface ValidationProblem {
  readonly file: string;
  /** Row as a spreadsheet shows it (header = row 1); 0 = the whole file or the mapping. */
  readonly row: number;
  readonly column: string | null;
  readonly value: string | null;
  readonly rule: string;
  readonly message: string;
}

export interface ValidationReport {
  readonly valid: boolean;
  readonly problems: ValidationProblem[];
  /** More problems exist than are listed. */
  readonly truncated: boolean;
  /** What an import would store (zeros when the file is not valid). */
  readonly summary: { readonly sites: number; readonly trials: number; readonly plots: number; readonly traits: string[] };
}

const EMPTY_SUMMARY: ValidationReport['summary'] = { sites: 0, trials: 0, plots: 0, traits: [] };

export async function validateFile(workspace: string, file: string, displayName: string, mapping: ImportMapping, ctx?: CallContext): Promise<ValidationReport> {
  const shown = (p: IntakeProblem): ValidationProblem => ({ ...p, file: p.file === file ? displayName : p.file });
  let table: ParsedPlotTable;
  try {
    table = await readPlotFile(file, mapping, { onProgress: (f) => ctx?.onProgress?.({ stage: 'read', fraction: f }) });
  } catch (e) {
    if (!(e instanceof IntakeError)) throw e;
    return { valid: false, problems: e.problems.map(shown), truncated: e.truncated, summary: EMPTY_SUMMARY };
  }
  const problems = existsSync(workspace) ? clashesWithWorkspace(workspace, table, displayName) : [];
  return {
    valid: problems.length === 0,
    problems,
    truncated: false,
    summary: { sites: new Set(table.trials.map((t) => t.site)).size, trials: table.trials.length, plots: table.plots.length, traits: table.traits.map((t) => t.name) },
  };
}

/** What the store would refuse: the same file imported before, or a trial already held. */
function clashesWithWorkspace(workspace: string, table: ParsedPlotTable, displayName: string): ValidationProblem[] {
  const ws = openWorkspace(workspace);
  try {
    const out: ValidationProblem[] = [];
    const earlier = ws.db.prepare('SELECT file_name, created_at FROM import_batch WHERE sha256 = ?').get(table.sha256.toLowerCase()) as
      | { file_name: string; created_at: string }
      | undefined;
    if (earlier)
      out.push({ file: displayName, row: 0, column: null, value: null, rule: 'duplicate-file', message: `this file was already imported as "${basename(earlier.file_name)}" on ${earlier.created_at}; importing it again would replace that batch only if asked to` });
    const held = ws.db.prepare('SELECT 1 FROM trial t JOIN site s ON s.id = t.site_id WHERE s.code = ? AND t.year = ? AND t.key = ?');
    const firstRow = new Map<string, number>();
    for (const p of table.plots) if (!firstRow.has(p.trialKey)) firstRow.set(p.trialKey, p.sourceRow);
    for (const t of table.trials) {
      if (held.get(t.site, t.year, t.key) === undefined) continue;
      out.push({ file: displayName, row: firstRow.get(t.key) ?? 0, column: table.mapping.columns.trial ?? table.mapping.columns.site ?? null, value: t.key, rule: 'trial-exists', message: `trial "${t.key}" at site "${t.site}" in ${t.year} is already in the workspace` });
      if (out.length >= 200) break;
    }
    return out;
  } finally {
    ws.close();
  }
}
