// Design matrix for meta-regression from trial covariates: an intercept, one column per
// continuous moderator, and treatment (dummy) coding for categorical moderators with the
// first level in sorted order as reference. Trials missing any moderator value are left
// out and listed, never dropped silently.
import { Matrix, zeros } from '../linalg/matrix.js';
import type { PoolingItem } from './types.js';
import { ownValue } from '../ownValue.js';

export interface ModeratorColumnInfo {
  moderator: string;
  kind: 'continuous' | 'categorical';
  levels: string[];
}

export interface ModeratorDesign {
  x: Matrix;
  terms: string[];
  /** Indices into the original item list of the trials used. */
  used: number[];
  excluded: string[];
  columns: ModeratorColumnInfo[];
}

function valueOf(item: PoolingItem, name: string): number | string | null {
  const v = ownValue(item.covariates, name);
  if (v === undefined || v === null) return null;
  if (typeof v === 'number') return Number.isFinite(v) ? v : null;
  const t = v.trim();
  return t === '' ? null : t;
}

const collator = new Intl.Collator('en', { numeric: true });

export function moderatorKinds(items: readonly PoolingItem[], moderators: readonly string[]): ModeratorColumnInfo[] {
  return moderators.map((name) => {
    const values = items.map((it) => valueOf(it, name)).filter((v): v is number | string => v !== null);
    const categorical = values.some((v) => typeof v === 'string');
    const levels = categorical ? [...new Set(values.map(String))].sort(collator.compare) : [];
    return { moderator: name, kind: categorical ? 'categorical' : 'continuous', levels };
  });
}

export function buildModeratorDesign(items: readonly PoolingItem[], moderators: readonly string[]): ModeratorDesign {
  const used: number[] = [];
  const excluded: string[] = [];
  items.forEach((it, i) => {
    if (moderators.every((m) => valueOf(it, m) !== null)) used.push(i);
    else excluded.push(it.trial);
  });
  // Levels from the trials actually used, so no dummy column is empty.
  const columns = moderatorKinds(used.map((i) => items[i]), moderators);
  const terms = ['intercept'];
  for (const c of columns) {
    if (c.kind === 'continuous') terms.push(c.moderator);
    else for (const level of c.levels.slice(1)) terms.push(`${c.moderator}=${level}`);
  }
  const x = zeros(used.length, terms.length);
  used.forEach((itemIndex, row) => {
    const it = items[itemIndex];
    let col = 0;
    x.data[row * terms.length + col++] = 1;
    for (const c of columns) {
      const value = valueOf(it, c.moderator);
      if (c.kind === 'continuous') x.data[row * terms.length + col++] = value as number;
      else for (const level of c.levels.slice(1)) x.data[row * terms.length + col++] = String(value) === level ? 1 : 0;
    }
  });
  return { x, terms, used, excluded, columns };
}
