// Import of one plot file: read and validate the whole file first, then store it in one
// transaction. A workspace created for this import is removed again if the import fails.
import { existsSync, rmSync } from 'node:fs';
import { readMappingFile, readPlotFile } from '../../intake/index.js';
import type { ImportMapping } from '../../intake/types.js';
import { openWorkspace, importParsedTable, type ImportSummary } from '../../store/index.js';
import { throwIfCancelled, type CallContext } from '../context.js';

export interface ImportOutcome {
  readonly workspace: string;
  readonly file: string;
  readonly created: boolean;
  readonly summary: ImportSummary;
}

export async function importFile(args: { workspace: string; file: string; mapping: string | ImportMapping; replace: boolean }, ctx?: CallContext): Promise<ImportOutcome> {
  const mapping = typeof args.mapping === 'string' ? readMappingFile(args.mapping) : args.mapping;
  const table = await readPlotFile(args.file, mapping, { onProgress: (f) => ctx?.onProgress?.({ stage: 'read', fraction: f }) });
  throwIfCancelled(ctx);
  const created = !existsSync(args.workspace);
  let ws;
  try {
    ws = openWorkspace(args.workspace, { create: created });
    const summary = importParsedTable(ws, table, {
      replace: args.replace,
      // Throwing here rolls the one import transaction back: a cancel mid-store stores nothing.
      onProgress: (done, total) => {
        ctx?.onProgress?.({ stage: 'store', fraction: total > 0 ? done / total : null });
        throwIfCancelled(ctx);
      },
    });
    return { workspace: args.workspace, file: args.file, created, summary };
  } catch (e) {
    ws?.close();
    ws = undefined;
    if (created) for (const s of ['', '-wal', '-shm']) rmSync(`${args.workspace}${s}`, { force: true });
    throw e;
  } finally {
    ws?.close();
  }
}
