// Read-only views of a workspace: the trial list and a trait exported in long format.
import { openWorkspace, listTrials, exportTrait, type TrialListing } from '../../store/index.js';

export interface ExportedTable {
  readonly header: string[];
  readonly rows: (string | number | null)[][];
}

export function listWorkspaceTrials(path: string): TrialListing[] {
  const ws = openWorkspace(path);
  try {
    return listTrials(ws);
  } finally {
    ws.close();
  }
}

export function exportWorkspaceTrait(path: string, trait: string): ExportedTable {
  const ws = openWorkspace(path);
  try {
    return exportTrait(ws, trait);
  } finally {
    ws.close();
  }
}
