// Words for a progress event of a long operation.

const STAGES: Record<string, string> = {
  read: 'Reading and checking the file',
  store: 'Storing in the workspace',
  'trial-stage': 'Analysing each trial',
  'one-stage': 'Fitting the mixed model',
  pooling: 'Pooling across trials',
  'rate-response': 'Fitting rate responses',
  'report-write': 'Writing the report',
  'report-print': 'Printing the report to PDF',
};

export function progressText(stage: string, fraction: number | null): string {
  const words = STAGES[stage] ?? stage;
  return fraction === null ? `${words}…` : `${words}: ${Math.floor(Math.min(1, Math.max(0, fraction)) * 100)}%`;
}

/** Overall fraction of an import: reading counts as the first half, storing as the second. */
export function importFraction(stage: string, fraction: number | null): number | null {
  if (fraction === null) return null;
  const f = Math.min(1, Math.max(0, fraction));
  if (stage === 'read') return f / 2;
  if (stage === 'store') return 0.5 + f / 2;
  return f;
}
