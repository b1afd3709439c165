// Read-only views of a workspace: the trial list and a trait exported in long format. A
// workspace that cannot be written (permissions, a read-only disk) is opened read-only.
import { exportTrait, explainSqliteError, listTrials, openWorkspaceForReading, resolveWorkspacePath, type TrialListing, type Workspace } from '../../store/index.js';

export interface ExportedTable {
  readonly header: string[];
  readonly rows: (string | number | null)[][];
}

function reading<T>(path: string, f: (ws: Workspace) => T): T {
  try {
    const ws = openWorkspaceForReading(resolveWorkspacePath(path));
    try {
      return f(ws);
    } finally {
      ws.close();
    }
  } catch (e) {
    throw explainSqliteError(e, path);
  }
}

export function listWorkspaceTrials(path: string): TrialListing[] {
  return reading(path, listTrials);
}

export function exportWorkspaceTrait(path: string, trait: string): ExportedTable {
  return reading(path, (ws) => exportTrait(ws, trait));
}
