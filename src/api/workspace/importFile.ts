// Import of one plot file: read and validate the whole file first, then store it in one
// transaction. Into a workspace that does not exist yet, the import builds a new one privately
// and publishes it atomically (createWorkspaceWith); if another process created the workspace
// meanwhile, the import goes into that one like any other. A failed import writes nothing.
import { existsSync } from 'node:fs';
import { formatProblems, readMappingFile, readPlotFile } from '../../intake/index.js';
import type { ImportMapping, ParsedPlotTable } from '../../intake/types.js';
import {
  createWorkspaceWith,
  explainSqliteError,
  importParsedTable,
  openWorkspace,
  resolveWorkspacePath,
  type ImportSummary,
  type Workspace,
} from '../../store/index.js';
import { throwIfCancelled, type CallContext } from '../context.js';
import { describeSiteAmounts } from '../analysis/siteAmounts.js';

export interface ImportOutcome {
  readonly workspace: string;
  readonly file: string;
  readonly created: boolean;
  readonly summary: ImportSummary;
  /** Values kept but worth a look (the plausibility screen), each naming file, row and column. */
  readonly warnings: readonly string[];
  /** What the import did that the user should know, in words (site-specific amounts stored per trial). */
  readonly notes: readonly string[];
}

/** Once per import: the treatments whose amounts differ between trials, now stored per trial. */
function importNotes(table: ParsedPlotTable): string[] {
  const amounts = describeSiteAmounts({ treatments: table.treatments, trials: table.trials.map((t) => ({ trial: t.key, appliedLevels: t.appliedLevels })) });
  return amounts === null ? [] : [`${amounts}: the amount applied in each trial is stored with it, and trends and rate curves analysed from this workspace use those amounts.`];
}

export async function importFile(args: { workspace: string; file: string; mapping: string | ImportMapping; replace: boolean }, ctx?: CallContext): Promise<ImportOutcome> {
  const mapping = typeof args.mapping === 'string' ? readMappingFile(args.mapping) : args.mapping;
  const table = await readPlotFile(args.file, mapping, { onProgress: (f) => ctx?.onProgress?.({ stage: 'read', fraction: f }) });
  throwIfCancelled(ctx);
  const target = resolveWorkspacePath(args.workspace);
  const store = (ws: Workspace): ImportSummary => storeTable(ws, table, args.replace, ctx);
  try {
    const warnings = (table.warnings ?? []).map((w) => formatProblems([w]));
    const notes = importNotes(table);
    if (!existsSync(target)) {
      const made = createWorkspaceWith(target, store);
      if (made.created) return { workspace: args.workspace, file: args.file, created: true, summary: made.result, warnings, notes };
    }
    const ws = openWorkspace(target);
    try {
      return { workspace: args.workspace, file: args.file, created: false, summary: store(ws), warnings, notes };
    } finally {
      ws.close();
    }
  } catch (e) {
    throw explainSqliteError(e, args.workspace);
  }
}

function storeTable(ws: Workspace, table: ParsedPlotTable, replace: boolean, ctx?: CallContext): ImportSummary {
  return importParsedTable(ws, table, {
    replace,
    // Throwing here rolls the one import transaction back: a cancel mid-store stores nothing.
    onProgress: (done, total) => {
      ctx?.onProgress?.({ stage: 'store', fraction: total > 0 ? done / total : null });
      throwIfCancelled(ctx);
    },
  });
}
