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

function clean(value: unknown): unknown {
  if (typeof value === 'number') return Number.isFinite(value) ? value : null;
  if (ArrayBuffer.isView(value) && !(value instanceof DataView)) return Array.from(value as unknown as ArrayLike<number>, (x) => clean(x));
  if (Array.isArray(value)) return value.map(clean);
  if (value !== null && typeof value === 'object') {
    const out: Record<string, unknown> = {};
    for (const [key, v] of Object.entries(value)) if (v !== undefined) out[key] = clean(v);
    return out;
  }
  return value;
}
