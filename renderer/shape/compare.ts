// Two saved analyses side by side: what changed in the spec (key by key), in the data (the
// fingerprint) and in the numbers (each contrast's pooled results and the optimum rate).

export interface SpecChange {
  readonly key: string;
  readonly left: string;
  readonly right: string;
}

/** Every leaf of a JSON value by its path ("twoStage.tau2", "contrasts[0].divisor"). */
export function flattenJson(value: unknown, prefix = '', out: Map<string, string> = new Map()): Map<string, string> {
  if (Array.isArray(value)) {
    if (value.length === 0) out.set(prefix, '[]');
    value.forEach((v, i) => flattenJson(v, `${prefix}[${i}]`, out));
  } else if (value !== null && typeof value === 'object') {
    const entries = Object.entries(value as Record<string, unknown>);
    if (entries.length === 0 && prefix) out.set(prefix, '{}');
    for (const [k, v] of entries) flattenJson(v, prefix ? `${prefix}.${k}` : k, out);
  } else out.set(prefix, value === undefined ? '' : JSON.stringify(value));
  return out;
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return v !== null && typeof v === 'object' && !Array.isArray(v);
}

function shown(v: unknown): string {
  if (v === undefined) return 'not set';
  if (v === null) return 'off';
  const text = JSON.stringify(v);
  return text.length > 90 ? `${text.slice(0, 87)}…` : text;
}

/**
 * The settings that differ, by path ("twoStage.tau2"). Objects on both sides are compared key by
 * key; anything else (a section switched off on one side, a changed list) is one row with both
 * values, so a whole section turned off reads as one line.
 */
export function specChanges(left: unknown, right: unknown, prefix = ''): SpecChange[] {
  if (isRecord(left) && isRecord(right)) {
    const keys = [...new Set([...Object.keys(left), ...Object.keys(right)])].sort();
    return keys.flatMap((k) => specChanges(left[k], right[k], prefix ? `${prefix}.${k}` : k));
  }
  if (Array.isArray(left) && Array.isArray(right) && left.length === right.length && left.every((x, i) => isRecord(x) && isRecord(right[i])))
    return left.flatMap((x, i) => specChanges(x, right[i], `${prefix}[${i}]`));
  return JSON.stringify(left) === JSON.stringify(right) ? [] : [{ key: prefix || '(spec)', left: shown(left), right: shown(right) }];
}

export interface NumberRow {
  readonly what: string;
  readonly left: number | null;
  readonly right: number | null;
  /** right - left (null when either is missing). */
  readonly change: number | null;
}

interface PooledLike {
  readonly name: string;
  readonly estimate: number | null;
  readonly lower: number | null;
  readonly upper: number | null;
  readonly tau2: number | null;
  readonly I2: number | null;
  readonly k: number;
  readonly predictionLower: number | null;
  readonly predictionUpper: number | null;
}

const FIELDS: readonly [keyof PooledLike, string][] = [
  ['estimate', 'pooled estimate'],
  ['lower', 'interval, lower'],
  ['upper', 'interval, upper'],
  ['predictionLower', 'new site, lower'],
  ['predictionUpper', 'new site, upper'],
  ['tau2', 'tau²'],
  ['I2', 'I²'],
  ['k', 'trials pooled'],
];

export function numberChanges(left: readonly PooledLike[], right: readonly PooledLike[], leftOptimum: number | null, rightOptimum: number | null): NumberRow[] {
  const names = [...new Set([...left.map((p) => p.name), ...right.map((p) => p.name)])];
  const rows: NumberRow[] = [];
  for (const name of names) {
    const l = left.find((p) => p.name === name);
    const r = right.find((p) => p.name === name);
    for (const [f, words] of FIELDS) {
      const lv = l ? (l[f] as number | null) : null;
      const rv = r ? (r[f] as number | null) : null;
      rows.push({ what: `${name}: ${words}`, left: lv, right: rv, change: lv === null || rv === null ? null : rv - lv });
    }
  }
  if (leftOptimum !== null || rightOptimum !== null)
    rows.push({ what: 'economic optimum rate', left: leftOptimum, right: rightOptimum, change: leftOptimum === null || rightOptimum === null ? null : rightOptimum - leftOptimum });
  return rows;
}
