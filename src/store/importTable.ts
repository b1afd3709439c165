// Store a validated plot table as one import batch, all or nothing: one IMMEDIATE transaction,
// prepared multi-row inserts, integer ids from Maps and explicit plot ids, so no per-row SELECT.
import type Database from 'better-sqlite3';
import { ManyfieldError } from '../api/result.js';
import type { ParsedPlotTable } from '../intake/types.js';
import { bulkInserter } from './bulkInsert.js';
import { ImportRefusedError } from './errors.js';
import { mergeProtocol } from './mergeProtocol.js';
import { mergeSites, mergeTraits } from './mergeReference.js';
import { checkTableConsistency, refuseInconsistent } from './tableConsistency.js';
import { storeAppliedLevels } from './appliedLevels.js';
import { checkStoredBounds } from './storedBounds.js';
import type { Workspace } from './workspace.js';

export interface ImportOptions {
  /**
   * Replace what the file brings: the batch of a file with the same SHA-256, and every stored
   * trial with the same site, year and trial key (a corrected file has another hash).
   */
  readonly replace?: boolean;
  /**
   * Rows written so far (plots + observations) out of the total; called every few thousand
   * rows. Throwing from it cancels the import: the transaction rolls back, nothing is stored.
   */
  readonly onProgress?: (done: number, total: number) => void;
  readonly now?: () => Date;
}

export interface BatchCounts {
  readonly batchId: number;
  readonly trials: number;
  readonly plots: number;
  readonly observations: number;
}

export interface ImportSummary extends BatchCounts {
  readonly fileName: string;
  readonly sha256: string;
  readonly rowsRead: number;
  readonly rowsStored: number;
  readonly newSites: number;
  readonly newTreatments: number;
  /** What --replace removed (the earlier batch, or the trials the file brings again), or null. */
  readonly replaced: BatchCounts | null;
}

const PROGRESS_EVERY = 16384;

function batchCounts(db: Database.Database, batchId: number): BatchCounts {
  const row = db
    .prepare(
      `SELECT (SELECT COUNT(*) FROM trial WHERE import_batch_id = @b) AS trials,
              (SELECT COUNT(*) FROM plot p JOIN trial t ON t.id = p.trial_id WHERE t.import_batch_id = @b) AS plots,
              (SELECT COUNT(*) FROM observation o JOIN plot p ON p.id = o.plot_id JOIN trial t ON t.id = p.trial_id
                 WHERE t.import_batch_id = @b) AS observations`,
    )
    .get({ b: batchId }) as Omit<BatchCounts, 'batchId'>;
  return { batchId, ...row };
}

/** Handle an earlier import of the same file: refuse, or delete its batch when replacing. */
function settleDuplicate(db: Database.Database, table: ParsedPlotTable, replace: boolean): BatchCounts | null {
  const earlier = db.prepare('SELECT id, file_name, created_at FROM import_batch WHERE sha256 = ?').get(table.sha256.toLowerCase()) as
    | { id: number; file_name: string; created_at: string }
    | undefined;
  if (!earlier) return null;
  if (!replace) {
    throw new ImportRefusedError(
      'duplicate-file',
      `this file (SHA-256 ${table.sha256.slice(0, 12)}…) was already imported as "${earlier.file_name}" on ${earlier.created_at}; nothing was changed — import with --replace to replace that batch`,
      { batchId: earlier.id, fileName: earlier.file_name },
    );
  }
  const counts = batchCounts(db, earlier.id);
  deleteBatch(db, earlier.id);
  return counts;
}

/**
 * Remove a batch and everything hanging off it. Written out rather than left to ON DELETE
 * CASCADE because imports run with foreign-key enforcement off (see importParsedTable).
 * A new table referencing trial or plot must be added here.
 */
/** The stored trials with the site, year and key of a trial in the table. */
function storedTrialsOf(db: Database.Database, table: ParsedPlotTable): { id: number; batchId: number | null; site: string; year: number; key: string; from: string }[] {
  const find = db.prepare(
    `SELECT t.id, t.import_batch_id AS batchId, b.file_name AS fileName FROM trial t JOIN site s ON s.id = t.site_id
     LEFT JOIN import_batch b ON b.id = t.import_batch_id WHERE s.code = ? AND t.year = ? AND t.key = ?`,
  );
  const out = [];
  for (const t of table.trials) {
    const r = find.get(t.site, t.year, t.key) as { id: number; batchId: number | null; fileName: string | null } | undefined;
    if (r) out.push({ id: r.id, batchId: r.batchId, site: t.site, year: t.year, key: t.key, from: r.fileName ?? 'the workspace (not from a file)' });
  }
  return out;
}

/** Refuses an import whose trials are stored already, listing every one of them. */
function refuseStoredTrials(clashes: ReturnType<typeof storedTrialsOf>): never {
  const shown = clashes.slice(0, 50).map((c) => `trial "${c.key}" at site "${c.site}" in ${c.year} (imported from "${c.from}")`);
  const more = clashes.length > 50 ? `; and ${clashes.length - 50} more` : '';
  throw new ImportRefusedError(
    'trial-exists',
    `${clashes.length} trial(s) of this file are already in the workspace: ${shown.join('; ')}${more}. Nothing was changed — import with --replace to replace those trials with this file's, or remove them from this file`,
    { trials: clashes.map((c) => ({ trial: c.key, site: c.site, year: c.year, from: c.from })) },
  );
}

/** Removes stored trials (with plots, values and covariates), then batches left with no trial. */
function deleteTrials(db: Database.Database, trialIds: readonly number[], batchIds: readonly (number | null)[]): BatchCounts {
  const ids = JSON.stringify(trialIds);
  const inTrials = 'SELECT value FROM json_each(@ids)';
  const counts = db
    .prepare(
      `SELECT (SELECT COUNT(*) FROM plot WHERE trial_id IN (${inTrials})) AS plots,
              (SELECT COUNT(*) FROM observation WHERE plot_id IN (SELECT id FROM plot WHERE trial_id IN (${inTrials}))) AS observations`,
    )
    .get({ ids }) as { plots: number; observations: number };
  db.prepare(`DELETE FROM observation WHERE plot_id IN (SELECT id FROM plot WHERE trial_id IN (${inTrials}))`).run({ ids });
  db.prepare(`DELETE FROM plot WHERE trial_id IN (${inTrials})`).run({ ids });
  db.prepare(`DELETE FROM trial_covariate WHERE trial_id IN (${inTrials})`).run({ ids });
  db.prepare(`DELETE FROM trial_applied_level WHERE trial_id IN (${inTrials})`).run({ ids });
  db.prepare(`DELETE FROM trial WHERE id IN (${inTrials})`).run({ ids });
  const batches = [...new Set(batchIds.filter((b): b is number => b !== null))];
  const dropEmpty = db.prepare('DELETE FROM import_batch WHERE id = ? AND NOT EXISTS (SELECT 1 FROM trial WHERE import_batch_id = ?)');
  for (const b of batches) dropEmpty.run(b, b);
  return { batchId: batches[0] ?? 0, trials: trialIds.length, plots: counts.plots, observations: counts.observations };
}

function addCounts(a: BatchCounts | null, b: BatchCounts | null): BatchCounts | null {
  if (a === null) return b;
  if (b === null) return a;
  return { batchId: a.batchId, trials: a.trials + b.trials, plots: a.plots + b.plots, observations: a.observations + b.observations };
}

function deleteBatch(db: Database.Database, batchId: number): void {
  const trials = 'SELECT id FROM trial WHERE import_batch_id = @b';
  db.prepare(`DELETE FROM observation WHERE plot_id IN (SELECT id FROM plot WHERE trial_id IN (${trials}))`).run({ b: batchId });
  db.prepare(`DELETE FROM plot WHERE trial_id IN (${trials})`).run({ b: batchId });
  db.prepare(`DELETE FROM trial_covariate WHERE trial_id IN (${trials})`).run({ b: batchId });
  db.prepare(`DELETE FROM trial_applied_level WHERE trial_id IN (${trials})`).run({ b: batchId });
  db.prepare('DELETE FROM trial WHERE import_batch_id = @b').run({ b: batchId });
  db.prepare('DELETE FROM import_batch WHERE id = @b').run({ b: batchId });
}

interface ExistingTrials {
  readonly keys: Map<string, string>; // "siteId|year|key" -> file name of its batch
  readonly labels: Set<string>;
}

function existingTrials(db: Database.Database): ExistingTrials {
  const rows = db
    .prepare('SELECT t.site_id, t.year, t.key, t.label, b.file_name FROM trial t LEFT JOIN import_batch b ON b.id = t.import_batch_id')
    .all() as { site_id: number; year: number; key: string; label: string; file_name: string | null }[];
  return {
    keys: new Map(rows.map((r) => [`${r.site_id}|${r.year}|${r.key}`, r.file_name ?? 'the workspace (not from a file)'])),
    labels: new Set(rows.map((r) => r.label)),
  };
}

/** The trial's key if no other trial uses it as its name, else the key qualified by site and year. */
function uniqueLabel(labels: Set<string>, key: string, site: string, year: number): string {
  let label = key;
  if (labels.has(label)) label = `${key} (${site} ${year})`;
  for (let i = 2; labels.has(label); i++) label = `${key} (${site} ${year}) #${i}`;
  labels.add(label);
  return label;
}

export function importParsedTable(ws: Workspace, table: ParsedPlotTable, options: ImportOptions = {}): ImportSummary {
  checkTableConsistency(table);
  const db = ws.db;
  const now = options.now ?? (() => new Date());
  const total = table.plots.length + table.observations.length;
  const progress = options.onProgress;

  const run = db.transaction((): ImportSummary => {
    let replaced = settleDuplicate(db, table, options.replace ?? false);
    const clashes = storedTrialsOf(db, table);
    if (clashes.length > 0) {
      if (!options.replace) refuseStoredTrials(clashes);
      replaced = addCounts(replaced, deleteTrials(db, clashes.map((c) => c.id), clashes.map((c) => c.batchId)));
    }
    checkStoredBounds(db, table);
    const protocol = mergeProtocol(db, table);
    const traitIds = mergeTraits(db, table.traits);
    const sites = mergeSites(db, table.trials.map((t) => t.site));

    const batchId = Number(
      db
        .prepare('INSERT INTO import_batch (file_name, sha256, rows_read, rows_stored, created_at, mapping_json) VALUES (?, ?, ?, ?, ?, ?)')
        .run(table.file, table.sha256.toLowerCase(), table.rowsRead, table.observations.length, now().toISOString(), JSON.stringify(table.mapping)).lastInsertRowid,
    );

    const existing = existingTrials(db);
    const insertTrial = db.prepare(
      'INSERT INTO trial (site_id, year, crop, design, protocol_id, import_batch_id, key, label) VALUES (?, ?, ?, ?, ?, ?, ?, ?)',
    );
    const insertCovariate = db.prepare('INSERT INTO trial_covariate (trial_id, name, value_num, value_text) VALUES (?, ?, ?, ?)');
    const trialIds = new Map<string, number>();
    for (const t of table.trials) {
      const siteId = sites.ids.get(t.site)!;
      const clash = existing.keys.get(`${siteId}|${t.year}|${t.key}`);
      if (clash !== undefined) {
        throw new ImportRefusedError(
          'trial-exists',
          `trial "${t.key}" at site "${t.site}" in ${t.year} is already in the workspace (imported from "${clash}"); nothing was changed — re-import that file with --replace to update it, or remove the trial from this file`,
          { trial: t.key, site: t.site, year: t.year, from: clash },
        );
      }
      const label = uniqueLabel(existing.labels, t.key, t.site, t.year);
      const id = Number(insertTrial.run(siteId, t.year, table.mapping.crop ?? null, t.design, protocol.protocolId, batchId, t.key, label).lastInsertRowid);
      trialIds.set(t.key, id);
      for (const [name, value] of Object.entries(table.trialCovariates[t.key] ?? {})) {
        insertCovariate.run(id, name, typeof value === 'number' ? value : null, typeof value === 'string' ? value : null);
      }
    }
    storeAppliedLevels(db, table, protocol.protocolId, trialIds, protocol.treatmentIds);

    // Plot ids are assigned here, so observations can name their plot without a lookup; the
    // IMMEDIATE lock guarantees nobody else takes ids meanwhile.
    const firstPlotId = ((db.prepare('SELECT COALESCE(MAX(id), 0) AS m FROM plot').get() as { m: number }).m) + 1;
    const plots = bulkInserter(db, 'plot', ['id', 'trial_id', 'treatment_id', 'block', 'row', 'col', 'source_row', 'label']);
    const pv = plots.values;
    const treatmentIds = protocol.treatmentIds;
    let done = 0;
    // Files are sorted by trial, so a one-entry cache answers most lookups without hashing.
    let lastKey: string | null = null;
    let trialId: number | undefined;
    for (let i = 0; i < table.plots.length; i++) {
      const p = table.plots[i];
      if (p.trialKey !== lastKey) {
        lastKey = p.trialKey;
        trialId = trialIds.get(lastKey);
      }
      const treatmentId = treatmentIds.get(p.treatment);
      if (trialId === undefined || treatmentId === undefined) refuseInconsistent(`row ${p.sourceRow} names ${trialId === undefined ? `trial "${p.trialKey}"` : `treatment "${p.treatment}"`}, which is not in the table's list`);
      const at = plots.nextRow();
      pv[at] = firstPlotId + i;
      pv[at + 1] = trialId;
      pv[at + 2] = treatmentId;
      pv[at + 3] = p.block;
      pv[at + 4] = p.row;
      pv[at + 5] = p.col;
      pv[at + 6] = p.sourceRow;
      pv[at + 7] = p.plotId ?? null;
      if (progress && ++done % PROGRESS_EVERY === 0) progress(done, total);
    }
    plots.flush();

    const observations = bulkInserter(db, 'observation', ['plot_id', 'trait_id', 'value']);
    const ov = observations.values;
    const nPlots = table.plots.length;
    let lastTrait: string | null = null;
    let traitId: number | undefined;
    for (const o of table.observations) {
      if (o.trait !== lastTrait) {
        lastTrait = o.trait;
        traitId = traitIds.get(lastTrait);
      }
      const plot = o.plot;
      const value = o.value;
      if (traitId === undefined || !(plot >= 0 && plot < nPlots && Number.isInteger(plot)) || (value !== null && !Number.isFinite(value))) {
        refuseInconsistent(`an observation (plot ${plot}, trait "${o.trait}", value ${value}) does not fit the table`);
      }
      const at = observations.nextRow();
      ov[at] = firstPlotId + plot;
      ov[at + 1] = traitId;
      ov[at + 2] = value;
      if (progress && ++done % PROGRESS_EVERY === 0) progress(done, total);
    }
    observations.flush();
    progress?.(total, total);

    return {
      batchId,
      fileName: table.file,
      sha256: table.sha256,
      rowsRead: table.rowsRead,
      rowsStored: table.observations.length,
      trials: table.trials.length,
      plots: table.plots.length,
      observations: table.observations.length,
      newSites: sites.added,
      newTreatments: protocol.newTreatments,
      replaced,
    };
  });
  // Foreign-key enforcement costs 10-25% of the insert time here (a parent lookup per row).
  // Every id written here comes from the Maps built inside this same transaction, so the
  // references hold by construction; enforcement is back on before anyone else uses the
  // connection. (The pragma is a no-op inside an open transaction, so a caller's
  // transaction keeps enforcement.)
  const relax = !db.inTransaction && db.pragma('foreign_keys', { simple: true }) === 1;
  if (relax) db.pragma('foreign_keys = OFF');
  try {
    return run.immediate();
  } catch (err) {
    // Two values of one trait for one plot: the observation key says no.
    if (err instanceof Error && (err as { code?: string }).code === 'SQLITE_CONSTRAINT_PRIMARYKEY' && /observation/.test(err.message)) {
      refuseInconsistent('one plot has two values of the same trait');
    }
    if (err instanceof Error && (err as { code?: string }).code === 'SQLITE_BUSY') {
      throw new ManyfieldError('conflict', `workspace "${ws.path}" is busy with another change (another import?); nothing was imported — try again when it has finished`);
    }
    throw err;
  } finally {
    if (relax) db.pragma('foreign_keys = ON');
  }
}
