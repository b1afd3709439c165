// Plot exclusions: a plot is never deleted, only set aside with the reason recorded.
import { ManyfieldError } from '../api/result.js';
import type { Workspace } from './workspace.js';

export function excludePlot(ws: Workspace, plotId: number, reason: string): void {
  const why = reason.trim();
  if (why.length === 0) throw new ManyfieldError('invalid-argument', 'excluding a plot needs a reason (for example "hail damage")');
  const info = ws.db.prepare('UPDATE plot SET excluded = 1, exclusion_reason = ? WHERE id = ?').run(why, plotId);
  if (info.changes === 0) throw new ManyfieldError('not-found', `no plot with id ${plotId} in this workspace`);
}

/** Undo an exclusion: the plot counts again. */
export function includePlot(ws: Workspace, plotId: number): void {
  const info = ws.db.prepare('UPDATE plot SET excluded = 0, exclusion_reason = NULL WHERE id = ?').run(plotId);
  if (info.changes === 0) throw new ManyfieldError('not-found', `no plot with id ${plotId} in this workspace`);
}
