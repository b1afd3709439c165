// The compact form of a pooled contrast: its tables with one row per trial (weights,
// leave-one-out, influence, cumulative) written column by column — one array per field, in the
// same row order — so a 4,000-trial pool does not repeat every field name 4,000 times. The
// numbers are the rows' numbers unchanged; `rowsFromColumns` gives the rows back.
import type { CumulativeRow, InfluenceRow, LeaveOneOutRow, PooledResult, PoolWeight, Sensitivity } from './types.js';

/** A table column by column: for each field of R, the values of every row in order. */
export type Columns<R> = { [K in keyof R]-?: R[K][] };

export interface CompactSensitivity {
  readonly leaveOneOut: Columns<LeaveOneOutRow>;
  readonly influence: Columns<InfluenceRow>;
  readonly cumulative: Columns<CumulativeRow>;
  readonly notes: readonly string[];
}

export type CompactPooledResult<P extends PooledResult = PooledResult> = Omit<P, 'weights' | 'sensitivity'> & {
  readonly weights: Columns<PoolWeight>;
  readonly sensitivity: CompactSensitivity;
};

const WEIGHT_FIELDS: readonly (keyof PoolWeight)[] = ['trial', 'weight', 'share'];
const LEAVE_ONE_OUT_FIELDS: readonly (keyof LeaveOneOutRow)[] = ['trial', 'estimate', 'se', 'tau2', 'lower', 'upper'];
const INFLUENCE_FIELDS: readonly (keyof InfluenceRow)[] = ['trial', 'standardisedResidual', 'studentisedDeletedResidual', 'cooksDistance', 'tau2Change', 'leverage'];
const CUMULATIVE_FIELDS: readonly (keyof CumulativeRow)[] = ['trial', 'year', 'k', 'estimate', 'se', 'tau2', 'lower', 'upper'];

export function toColumns<R extends object>(rows: readonly R[], fields: readonly (keyof R)[]): Columns<R> {
  const out = {} as Record<keyof R, unknown[]>;
  for (const f of fields) {
    const column = new Array<unknown>(rows.length);
    for (let i = 0; i < rows.length; i++) column[i] = rows[i][f];
    out[f] = column;
  }
  return out as Columns<R>;
}

export function rowsFromColumns<R extends object>(columns: Columns<R>): R[] {
  const fields = Object.keys(columns) as (keyof R)[];
  const n = fields.length === 0 ? 0 : (columns[fields[0]] as unknown[]).length;
  const rows: R[] = [];
  for (let i = 0; i < n; i++) {
    const row = {} as R;
    for (const f of fields) row[f] = (columns[f] as R[keyof R][])[i];
    rows.push(row);
  }
  return rows;
}

export function compactSensitivity(s: Sensitivity): CompactSensitivity {
  return {
    leaveOneOut: toColumns(s.leaveOneOut, LEAVE_ONE_OUT_FIELDS),
    influence: toColumns(s.influence, INFLUENCE_FIELDS),
    cumulative: toColumns(s.cumulative, CUMULATIVE_FIELDS),
    notes: s.notes,
  };
}

export function compactPooled<P extends PooledResult>(p: P): CompactPooledResult<P> {
  return { ...p, weights: toColumns(p.weights, WEIGHT_FIELDS), sensitivity: compactSensitivity(p.sensitivity) };
}

/** Whether a pooled entry (reported or stored) is already in the compact form. */
export function isCompactPooled(p: PooledResult | CompactPooledResult): p is CompactPooledResult {
  return !Array.isArray(p.weights);
}
