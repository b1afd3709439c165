// Typed errors of the store. Each carries a code the api layer turns into a Result, a reason
// a caller can branch on, and a message that tells the user what to do.
import { ManyfieldError } from '../api/result.js';

export type WorkspaceRefusalReason =
  | 'newer-version'
  | 'edited-migration'
  | 'history-gap'
  | 'not-a-workspace'
  | 'readonly-needs-upgrade'
  | 'read-only'
  | 'backup-failed';

/** The workspace exists but this Manyfield must not touch it. */
export class WorkspaceRefusedError extends ManyfieldError {
  constructor(
    readonly reason: WorkspaceRefusalReason,
    message: string,
    details?: unknown,
  ) {
    super('workspace-refused', message, details);
    this.name = 'WorkspaceRefusedError';
  }
}

export class WorkspaceNotFoundError extends ManyfieldError {
  constructor(readonly path: string) {
    super('not-found', `workspace "${path}" does not exist; check the path, or create it (for example by importing a file into it)`, { path });
    this.name = 'WorkspaceNotFoundError';
  }
}

export type ImportRefusalReason =
  | 'duplicate-file'
  | 'treatment-conflict'
  | 'factor-conflict'
  | 'trait-conflict'
  | 'control-conflict'
  | 'trial-exists'
  | 'inconsistent-table'
  | 'trait-bounds';

/** An import that would contradict what the workspace holds; nothing was written. */
export class ImportRefusedError extends ManyfieldError {
  constructor(
    readonly reason: ImportRefusalReason,
    message: string,
    details?: unknown,
  ) {
    super(reason === 'inconsistent-table' || reason === 'trait-bounds' ? 'invalid-input' : 'conflict', message, details);
    this.name = 'ImportRefusedError';
  }
}
