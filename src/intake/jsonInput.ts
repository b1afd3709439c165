// JSON documents from users (mapping files, analysis specs, api arguments) are small. A
// hostile one can still be deep enough to overflow the stack of any recursive walker, or hold
// a megabyte string that every later message would echo. Both are refused up front, naming
// the key, before the document reaches the schema.

export const MAX_JSON_FILE_BYTES = 1 << 20; // 1 MiB: real specs and mappings are a few KB
export const MAX_JSON_DEPTH = 32;
export const MAX_JSON_STRING = 10_000;

export class JsonShapeError extends Error {
  constructor(
    readonly key: string,
    message: string,
  ) {
    super(message);
    this.name = 'JsonShapeError';
  }
}

/** Nesting depth of JSON text, counted without parsing (strings skipped); stops early past the limit. */
export function jsonTextDepth(text: string, limit = MAX_JSON_DEPTH): number {
  let depth = 0;
  let max = 0;
  let inString = false;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (inString) {
      if (c === 92) i++; // backslash: skip the escaped character
      else if (c === 34) inString = false;
    } else if (c === 34) inString = true;
    else if (c === 123 || c === 91) {
      if (++depth > max) max = depth;
      if (max > limit) return max;
    } else if (c === 125 || c === 93) depth--;
  }
  return max;
}

/** Parses JSON text after checking its depth; throws JsonShapeError or SyntaxError. */
export function parseBoundedJson(text: string): unknown {
  if (jsonTextDepth(text) > MAX_JSON_DEPTH) throw new JsonShapeError('(top level)', `the document is nested more than ${MAX_JSON_DEPTH} levels deep; a mapping or spec needs a few`);
  const value: unknown = JSON.parse(text);
  checkJsonShape(value);
  return value;
}

function keyText(path: readonly string[]): string {
  const joined = path.join('.') || '(top level)';
  return joined.length > 120 ? `${joined.slice(0, 117)}...` : joined;
}

/** Checks a parsed value: depth and the length of every string and key. Iterative, so depth itself cannot overflow it. */
export function checkJsonShape(value: unknown): void {
  const stack: [unknown, string[]][] = [[value, []]];
  while (stack.length > 0) {
    const [v, path] = stack.pop()!;
    if (path.length > MAX_JSON_DEPTH) throw new JsonShapeError(keyText(path.slice(0, 8)), `key "${keyText(path.slice(0, 8))}...": nested more than ${MAX_JSON_DEPTH} levels deep; a mapping or spec needs a few`);
    if (typeof v === 'string') {
      if (v.length > MAX_JSON_STRING) throw new JsonShapeError(keyText(path), `key "${keyText(path)}": the text is ${v.length} characters long; at most ${MAX_JSON_STRING} are allowed`);
    } else if (Array.isArray(v)) {
      v.forEach((item, i) => stack.push([item, [...path, String(i)]]));
    } else if (v !== null && typeof v === 'object') {
      for (const [k, item] of Object.entries(v)) {
        if (k.length > MAX_JSON_STRING) throw new JsonShapeError(keyText(path), `a key under "${keyText(path)}" is ${k.length} characters long; at most ${MAX_JSON_STRING} are allowed`);
        stack.push([item, [...path, k]]);
      }
    }
  }
}
