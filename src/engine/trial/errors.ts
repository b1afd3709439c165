// Input the trial model cannot use: named trial, plot and rule, so the user can fix the data.
export class TrialInputError extends Error {
  constructor(readonly trial: string, message: string, readonly plotId?: string | number | null) {
    super(`trial "${trial}"${plotId !== undefined && plotId !== null ? `, plot ${plotId}` : ''}: ${message}`);
    this.name = 'TrialInputError';
  }
}
