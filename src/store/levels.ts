// Factor levels between the domain (number | string | null) and the two level columns.
import type { FactorInfo, LevelValue } from '../engine/types.js';

export interface StoredLevel {
  readonly value_num: number | null;
  readonly value_text: string | null;
}

export function levelFromColumns(row: StoredLevel): LevelValue {
  if (row.value_num !== null) return row.value_num;
  return row.value_text;
}

/** Columns for a level; null when the value cannot belong to a factor of this kind. */
export function levelToColumns(factor: FactorInfo, value: LevelValue | undefined): StoredLevel | null {
  if (value === null || value === undefined) return { value_num: null, value_text: null };
  if (factor.kind === 'numeric') return typeof value === 'number' && Number.isFinite(value) ? { value_num: value, value_text: null } : null;
  return { value_num: null, value_text: String(value) };
}

/**
 * Same level? Numbers compare with a relative tolerance of 1e-9 so that one rate converted
 * from lb/ac in one file and typed in kg/ha in another still counts as the same level.
 */
export function sameLevel(a: LevelValue, b: LevelValue): boolean {
  if (typeof a === 'number' && typeof b === 'number') return Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b));
  return a === b;
}

export function describeLevel(v: LevelValue): string {
  return v === null ? 'not applicable' : typeof v === 'number' ? String(v) : `"${v}"`;
}
