// Zod's issues as sentences a user can act on: the key (spec.contrasts[4].degree), the value
// given, what is allowed and the closest allowed value. A union (a contrast of one of four kinds)
// is answered for the kind the object was meant to be, not with "Invalid input".
import type { z } from './zod.js';
import { didYouMean } from './closest.js';

type Issue = z.core.$ZodIssue;
type AnySchema = z.core.$ZodType;
type Path = readonly PropertyKey[];

interface Def {
  readonly type: string;
  readonly innerType?: AnySchema;
  readonly element?: AnySchema;
  readonly shape?: Record<string, AnySchema>;
  readonly options?: readonly AnySchema[];
  readonly values?: readonly unknown[];
  readonly entries?: Record<string, unknown>;
  readonly in?: AnySchema;
  readonly out?: AnySchema;
  readonly valueType?: AnySchema;
}

// zod keeps each schema's definition on `_zod.def`; read it through one narrow type.
const defOf = (s: AnySchema): Def => (s as unknown as { _zod: { def: Def } })._zod.def;

/** Peels optional, nullable, default and pipes down to the schema that checks the value. */
function unwrap(s: AnySchema): AnySchema {
  for (;;) {
    const d = defOf(s);
    if ((d.type === 'optional' || d.type === 'nullable' || d.type === 'default' || d.type === 'prefault' || d.type === 'readonly') && d.innerType) s = d.innerType;
    else if (d.type === 'pipe' && d.out) s = defOf(d.out).type === 'transform' ? d.in! : d.out;
    else return s;
  }
}

/** The schema that checks the value at `path` (array indices and record keys stepped through). */
function schemaAt(root: AnySchema, path: Path, value: unknown): AnySchema | null {
  let s: AnySchema = unwrap(root);
  let v = value;
  for (const key of path) {
    const d = defOf(s);
    if (d.type === 'object' && d.shape && typeof key === 'string' && key in d.shape) s = d.shape[key];
    else if (d.type === 'array' && d.element) s = d.element;
    else if (d.type === 'record' && d.valueType) s = d.valueType;
    else if (d.type === 'union' && d.options) {
      const chosen = chooseOption(d.options, v);
      if (!chosen) return null;
      return schemaAt(chosen, [key], v);
    } else return null;
    v = v !== null && typeof v === 'object' ? (v as Record<PropertyKey, unknown>)[key] : undefined;
    s = unwrap(s);
  }
  return s;
}

/** The option of an object union the value was meant to be: the one sharing most keys with it. */
function chooseOption(options: readonly AnySchema[], value: unknown): AnySchema | null {
  if (value === null || typeof value !== 'object' || Array.isArray(value)) return null;
  const keys = Object.keys(value).filter((k) => k !== 'name');
  let best: AnySchema | null = null;
  let bestScore = 0;
  for (const o of options) {
    const d = defOf(unwrap(o));
    if (d.type !== 'object' || !d.shape) continue;
    const score = keys.filter((k) => k in d.shape!).length;
    if (score > bestScore) {
      best = unwrap(o);
      bestScore = score;
    }
  }
  return best;
}

/** Allowed literal values of an enum, a literal or a union of them; null when the schema is not one. */
function allowedValues(s: AnySchema): unknown[] | null {
  const d = defOf(unwrap(s));
  if (d.type === 'enum' && d.entries) return Object.values(d.entries);
  if (d.type === 'literal' && d.values) return [...d.values];
  if (d.type === 'union' && d.options) {
    const all: unknown[] = [];
    for (const o of d.options) {
      const v = allowedValues(o);
      if (v === null) return null;
      all.push(...v);
    }
    return all;
  }
  return null;
}

export function formatPath(root: string, path: Path): string {
  return path.reduce<string>((s, k) => (typeof k === 'number' ? `${s}[${k}]` : s === '' ? String(k) : `${s}.${String(k)}`), root);
}

function valueAt(root: unknown, path: Path): unknown {
  let v = root;
  for (const k of path) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<PropertyKey, unknown>)[k];
  }
  return v;
}

const show = (v: unknown): string => {
  const text = JSON.stringify(v) ?? String(v);
  return text.length > 60 ? `${text.slice(0, 57)}...` : text;
};
const list = (values: readonly unknown[]): string => values.map((v) => JSON.stringify(v)).join(', ');

/** One sentence per problem, each naming the key, the value, what is allowed and the closest. */
export function describeIssues(schema: AnySchema, input: unknown, issues: readonly Issue[], root: string, base: Path = []): string[] {
  const out: string[] = [];
  for (const issue of issues) {
    const path = [...base, ...issue.path];
    const key = formatPath(root, path);
    const given = valueAt(input, path);
    const here = schemaAt(schema, path, input);
    switch (issue.code) {
      case 'unrecognized_keys': {
        const d = here ? defOf(here) : null;
        const allowed = d?.shape ? Object.keys(d.shape) : [];
        for (const k of issue.keys) {
          out.push(`${formatPath(root, [...path, k])}: unknown key "${k}"${allowed.length ? `; the keys allowed here are ${allowed.map((a) => `"${a}"`).join(', ')}${didYouMean(k, allowed)}` : ''}`);
        }
        break;
      }
      case 'invalid_union': {
        const d = here ? defOf(here) : null;
        const literal = here ? allowedValues(here) : null;
        if (literal !== null) {
          out.push(`${key}: ${show(given)} is not allowed; use ${list(literal)}${typeof given === 'string' ? didYouMean(given, literal.map(String)) : ''}`);
          break;
        }
        const option = d?.options ? chooseOption(d.options, given) : null;
        if (option) {
          const again = (option as unknown as { safeParse: (v: unknown) => { success: boolean; error?: { issues: Issue[] } } }).safeParse(given);
          if (!again.success && again.error) {
            out.push(...describeIssues(option, given, again.error.issues, key, []));
            break;
          }
        }
        out.push(`${key}: ${show(given)} does not match any accepted form${d?.options ? `; ${unionHint(d.options)}` : ''}`);
        break;
      }
      case 'invalid_value': {
        // A schema that words its own refusal (a random term in formula notation) keeps its words.
        if (!issue.message.startsWith('Invalid')) {
          out.push(`${key}: ${issue.message}`);
          break;
        }
        const allowed = issue.values;
        out.push(`${key}: ${show(given)} is not allowed; use ${list(allowed)}${typeof given === 'string' ? didYouMean(given, allowed.map(String)) : ''}`);
        break;
      }
      case 'invalid_type':
        out.push(given === undefined ? `${key}: missing; it is required (${issue.expected})` : `${key}: expected ${issue.expected}, got ${show(given)}`);
        break;
      default:
        out.push(`${key === '' ? '' : `${key}: `}${issue.message}${given !== undefined && typeof given !== 'object' ? ` (given ${show(given)})` : ''}`);
    }
  }
  return out;
}

/** For an object union: the key sets of its forms. */
function unionHint(options: readonly AnySchema[]): string {
  const forms = options.map((o) => {
    const d = defOf(unwrap(o));
    return d.shape ? `{${Object.keys(d.shape).join(', ')}}` : d.type;
  });
  return `the accepted forms are ${forms.join(' or ')}`;
}
