// Engine results cross process and file boundaries as JSON, which has no NaN or Infinity:
// such values leave the engine as null, and typed arrays as plain arrays.

/** A finite number, or null for NaN, ±Infinity and absent values. */
export function num(x: number | null | undefined): number | null {
  return x === null || x === undefined || !Number.isFinite(x) ? null : x;
}

export function numRecord(r: Readonly<Record<string, number>>): Record<string, number | null> {
  const out: Record<string, number | null> = {};
  for (const [k, v] of Object.entries(r)) out[k] = num(v);
  return out;
}

/** A deep copy safe for JSON.stringify: non-finite numbers become null, typed arrays plain arrays. */
export function jsonSafe<T>(value: T): T {
  return clean(value) as T;
}

// A pool's result holds thousands of small rows (leave-one-out, influence, cumulative): the copy
// walks keys and elements with plain loops, without the [key, value] pair Object.entries would
// allocate per field.
function clean(value: unknown): unknown {
  if (typeof value === 'number') return Number.isFinite(value) ? value : null;
  if (value === null || typeof value !== 'object') return value;
  if (Array.isArray(value)) {
    const out = new Array<unknown>(value.length);
    for (let i = 0; i < value.length; i++) out[i] = clean(value[i]);
    return out;
  }
  if (ArrayBuffer.isView(value) && !(value instanceof DataView)) return Array.from(value as unknown as ArrayLike<number>, (x) => clean(x));
  const record = value as Record<string, unknown>;
  const out: Record<string, unknown> = {};
  for (const key of Object.keys(record)) {
    const v = record[key];
    if (v !== undefined) out[key] = clean(v);
  }
  return out;
}
