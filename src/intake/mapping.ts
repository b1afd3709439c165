// The mapping file: read, check against the schema, then check it makes sense (the columns a
// plot table needs, known units). Every complaint names the file and the key.
import { readFileSync, statSync } from 'node:fs';
import { JsonShapeError, MAX_JSON_FILE_BYTES, parseBoundedJson } from './jsonInput.js';
import { columnsSchema } from '../spec/analysisSpec.js';
import { didYouMean } from '../spec/closest.js';
import { importMappingSchema, IntakeError, traitMappingSchema, type ImportMapping, type IntakeProblem } from './types.js';
import { toCanonical, UnitError } from './units.js';

function problem(file: string, row: number, column: string | null, value: string | null, rule: string, message: string): IntakeProblem {
  return { file, row, column, value, rule, message };
}

function showValue(v: unknown): string | null {
  if (v === undefined) return null;
  const text = typeof v === 'string' ? v : JSON.stringify(v);
  return text.length > 80 ? `${text.slice(0, 77)}...` : text;
}

function valueAt(root: unknown, path: readonly PropertyKey[]): unknown {
  let v = root;
  for (const key of path) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<PropertyKey, unknown>)[key];
  }
  return v;
}

/** 1-based line of a character offset, for JSON syntax errors. */
function lineOf(text: string, offset: number): number {
  let line = 1;
  for (let i = 0; i < offset && i < text.length; i++) if (text.charCodeAt(i) === 10) line++;
  return line;
}

export function readMappingFile(path: string): ImportMapping {
  let text: string;
  try {
    const size = statSync(path).size;
    if (size > MAX_JSON_FILE_BYTES) {
      throw new IntakeError([problem(path, 0, null, null, 'file-too-large', `the mapping file is ${size} bytes; a mapping is a few kilobytes and at most ${MAX_JSON_FILE_BYTES} bytes are read — check that --map names the mapping, not the data`)]);
    }
    text = readFileSync(path, 'utf8').replace(/^\uFEFF/, '');
  } catch (e) {
    if (e instanceof IntakeError) throw e;
    throw new IntakeError([problem(path, 0, null, null, 'file-unreadable', `cannot read the mapping file: ${(e as Error).message}`)]);
  }
  let json: unknown;
  try {
    json = parseBoundedJson(text);
  } catch (e) {
    if (e instanceof JsonShapeError) throw new IntakeError([problem(path, 0, e.key, null, 'mapping-shape', e.message)]);
    const message = (e as Error).message;
    const at = /position (\d+)/.exec(message);
    const row = at ? lineOf(text, Number(at[1])) : 0;
    throw new IntakeError([problem(path, row, null, null, 'bad-json', `the mapping file is not valid JSON: ${message}`)]);
  }
  return parseMapping(json, path);
}

/** Validates a mapping object (from a file or built in code); throws IntakeError naming each key. */
export function parseMapping(json: unknown, file: string): ImportMapping {
  const parsed = importMappingSchema.safeParse(json);
  if (!parsed.success) {
    const problems = parsed.error.issues.flatMap((issue) => {
      const keys = issue.code === 'unrecognized_keys' ? issue.keys.map((k) => [...issue.path, k]) : [issue.path];
      return keys.map((path) => {
        const key = path.map(String).join('.') || '(top level)';
        const rule = issue.code === 'unrecognized_keys' ? 'mapping-unknown-key' : 'mapping-schema';
        const message = issue.code === 'unrecognized_keys' ? unknownKeyMessage(key, issue.path, String(path[path.length - 1])) : `mapping key "${key}": ${issue.message}`;
        return problem(file, 0, key, showValue(valueAt(json, path)), rule, message);
      });
    });
    throw new IntakeError(problems);
  }
  const problems = checkMapping(parsed.data, file);
  if (problems.length > 0) throw new IntakeError(problems);
  return parsed.data;
}

/** The keys allowed where an unknown key was found, for the message. */
function keysAt(path: readonly PropertyKey[]): string[] {
  if (path.length === 0) return Object.keys(importMappingSchema.shape);
  if (path[0] === 'columns' && path.length === 1) return Object.keys(columnsSchema.shape);
  if (path[0] === 'trait' || path[0] === 'traits') return Object.keys(traitMappingSchema.shape);
  return [];
}

function unknownKeyMessage(key: string, parent: readonly PropertyKey[], typed: string): string {
  const allowed = keysAt(parent);
  if (allowed.length === 0) return `unknown key "${key}" in the mapping`;
  const where = parent.length === 0 ? 'at the top level' : `under "${parent.map(String).join('.')}"`;
  return `unknown key "${key}" in the mapping; the keys allowed ${where} are ${allowed.map((k) => `"${k}"`).join(', ')}${didYouMean(typed, allowed)} (all keys: manyfield import --help)`;
}

/** Checks a schema-valid mapping can describe a plot table: required columns named, units known. */
export function checkMapping(mapping: ImportMapping, file: string): IntakeProblem[] {
  const out: IntakeProblem[] = [];
  const c = mapping.columns;
  const need = (key: string, message: string): void => {
    out.push(problem(file, 0, key, null, 'mapping-incomplete', message));
  };
  if (c.treatment === undefined) need('columns.treatment', 'the mapping must name the treatment column (columns.treatment)');
  if (c.response === undefined) need('columns.response', 'the mapping must name the response column (columns.response)');
  if (c.trial === undefined && (c.site === undefined || c.year === undefined)) {
    need('columns.trial', 'the mapping must name a trial column (columns.trial) or both site and year columns (columns.site, columns.year)');
  }
  if (c.trait !== undefined && mapping.trait !== undefined) {
    out.push(problem(file, 0, 'trait', null, 'mapping-conflict', 'with a trait column (columns.trait) list the traits under "traits", not "trait"'));
  }
  for (const factor of Object.keys(mapping.controlLevels ?? {})) {
    if (mapping.control === undefined) out.push(problem(file, 0, 'controlLevels', factor, 'mapping-incomplete', 'controlLevels gives the control\'s levels, so the mapping must name the control ("control": "CTL")'));
    if (!(factor in (c.factors ?? {}))) {
      const known = Object.keys(c.factors ?? {});
      out.push(problem(file, 0, `controlLevels.${factor}`, factor, 'mapping-unknown-factor', `controlLevels names factor "${factor}", which is not under columns.factors (${known.length ? known.map((k) => `"${k}"`).join(', ') : 'none'})`));
    }
  }
  const traits = [...(mapping.trait ? [['trait', mapping.trait] as const] : []), ...(mapping.traits ?? []).map((t, i) => [`traits.${i}`, t] as const)];
  for (const [key, t] of traits) {
    try {
      toCanonical(t.unit, mapping.crop);
    } catch (e) {
      if (!(e instanceof UnitError)) throw e;
      const rule = /needs the crop|bushel weight/.test(e.message) ? 'crop-unknown' : 'unknown-unit';
      out.push(problem(file, 0, rule === 'crop-unknown' ? 'crop' : `${key}.unit`, rule === 'crop-unknown' ? (mapping.crop ?? null) : t.unit, rule, e.message));
    }
    if (t.lower !== undefined && t.upper !== undefined && t.lower > t.upper) {
      out.push(problem(file, 0, `${key}.lower`, String(t.lower), 'mapping-bounds', `trait "${t.name}": lower bound ${t.lower} is above upper bound ${t.upper}`));
    }
  }
  return out;
}
