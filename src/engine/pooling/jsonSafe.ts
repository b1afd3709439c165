// Results cross process and file boundaries as JSON: NaN and infinities become null and
// typed arrays become plain arrays.
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
