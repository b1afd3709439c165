// The intake form's state and its translation to the import mapping the core reads. The form
// starts from the server's guess; the user corrects it. Kept free of React so it can be tested.
import type { ImportMapping } from '../../src/intake/types.js';

export const COLUMN_ROLES = ['trial', 'site', 'year', 'block', 'treatment', 'response', 'plot', 'row', 'col', 'design'] as const;
export type ColumnRole = (typeof COLUMN_ROLES)[number];

export const ROLE_LABELS: Record<ColumnRole, string> = {
  trial: 'Trial identifier',
  site: 'Site',
  year: 'Year',
  block: 'Block (replicate)',
  treatment: 'Treatment code',
  response: 'Measured value',
  plot: 'Plot identifier',
  row: 'Field row',
  col: 'Field column',
  design: 'Design',
};

/** Units the core converts from, grouped by what they measure. */
export const TRAIT_UNITS = ['t/ha', 'kg/ha', 'dt/ha', 'g/m2', 'lb/ac', 'bu/ac', '%', 'g/kg', 'fraction', 'as-is'] as const;
export const DESIGNS = ['randomised-blocks', 'completely-randomised', 'latin-square', 'row-column'] as const;
export type DesignChoice = (typeof DESIGNS)[number];

export interface FactorField {
  readonly name: string;
  readonly column: string;
  readonly unit: string;
}

export interface MappingForm {
  readonly columns: Readonly<Record<ColumnRole, string>>;
  readonly factors: readonly FactorField[];
  readonly traitName: string;
  readonly traitUnit: string;
  /** Used when no design column is mapped. */
  readonly design: DesignChoice;
  readonly control: string;
  readonly crop: string;
}

/** The guess as the server sends it: a partial mapping (columns nested, or flat). */
export interface MappingGuess {
  readonly columns?: Partial<Record<ColumnRole, string>> & { readonly factors?: Readonly<Record<string, string>> };
  readonly trait?: { readonly name?: string; readonly unit?: string };
  readonly control?: string;
  readonly design?: string;
  readonly factorUnits?: Readonly<Record<string, string>>;
}

function emptyColumns(): Record<ColumnRole, string> {
  return Object.fromEntries(COLUMN_ROLES.map((r) => [r, ''])) as Record<ColumnRole, string>;
}

/** A unit written in the header, e.g. "yield (t/ha)" or "yield_kg_ha". */
export function unitFromHeader(header: string): string | null {
  const h = header.toLowerCase().replace(/\s+/g, '');
  const bracket = /[([]([^)\]]+)[)\]]/.exec(h)?.[1];
  const candidates: readonly string[] = TRAIT_UNITS;
  if (bracket && candidates.includes(bracket)) return bracket;
  if (/t_?ha|t\/ha/.test(h)) return 't/ha';
  if (/kg_?ha|kg\/ha/.test(h)) return 'kg/ha';
  if (/bu_?ac|bu\/ac/.test(h)) return 'bu/ac';
  if (/pct|percent|%/.test(h)) return '%';
  return null;
}

function pick(header: readonly string[], value: unknown): string {
  return typeof value === 'string' && header.includes(value) ? value : '';
}

export function formFromGuess(header: readonly string[], guess: MappingGuess | null | undefined): MappingForm {
  const g: MappingGuess = guess ?? {};
  const cols = g.columns ?? {};
  const columns = emptyColumns();
  for (const role of COLUMN_ROLES) columns[role] = pick(header, (cols as Record<string, unknown>)[role]);
  const factorMap = cols.factors ?? {};
  const factors = Object.entries(factorMap)
    .filter(([, column]) => header.includes(column))
    .map(([name, column]) => ({ name, column, unit: g.factorUnits?.[name] ?? unitFromHeader(column) ?? '' }));
  const response = columns.response;
  const design = (DESIGNS as readonly string[]).includes(g.design ?? '') ? (g.design as DesignChoice) : columns.block ? 'randomised-blocks' : 'completely-randomised';
  return {
    columns,
    factors,
    traitName: g.trait?.name ?? (response ? response.replace(/\s*[([].*$/, '').replace(/_(t|kg)_?ha$/i, '').trim() || response : ''),
    traitUnit: g.trait?.unit ?? (response ? (unitFromHeader(response) ?? 't/ha') : 't/ha'),
    design,
    control: g.control ?? '',
    crop: '',
  };
}

/** Headers not yet given a role or a factor: offered as extra factors. */
export function unusedHeaders(header: readonly string[], form: MappingForm): string[] {
  const used = new Set<string>([...Object.values(form.columns), ...form.factors.map((f) => f.column)]);
  return header.filter((h) => !used.has(h));
}

/** What must be settled before the file can be checked, in words. */
export function formProblems(form: MappingForm): string[] {
  const out: string[] = [];
  const c = form.columns;
  if (!c.treatment) out.push('Choose the column holding the treatment code.');
  if (!c.response) out.push('Choose the column holding the measured value.');
  if (!c.trial && !(c.site && c.year)) out.push('Choose a trial column, or both a site and a year column.');
  if (!form.traitName.trim()) out.push('Name the measured trait (e.g. yield).');
  if (form.traitUnit === 'bu/ac' && !form.crop.trim()) out.push('Bushels per acre need the crop (its standard bushel weight).');
  const roles = Object.entries(c).filter(([, v]) => v);
  const seen = new Map<string, string>();
  for (const [role, column] of roles) {
    const other = seen.get(column);
    if (other) out.push(`Column "${column}" is chosen both as ${ROLE_LABELS[other as ColumnRole].toLowerCase()} and as ${ROLE_LABELS[role as ColumnRole].toLowerCase()}.`);
    seen.set(column, role);
  }
  for (const f of form.factors) if (!f.name.trim()) out.push(`Name the factor read from column "${f.column}".`);
  return out;
}

export function toMapping(form: MappingForm, sheet: string | null): ImportMapping {
  const columns: Record<string, unknown> = {};
  for (const role of COLUMN_ROLES) if (form.columns[role]) columns[role] = form.columns[role];
  if (form.factors.length > 0) columns.factors = Object.fromEntries(form.factors.map((f) => [f.name.trim(), f.column]));
  const factorUnits = Object.fromEntries(form.factors.filter((f) => f.unit.trim()).map((f) => [f.name.trim(), f.unit.trim()]));
  return {
    columns: columns as ImportMapping['columns'],
    trait: { name: form.traitName.trim(), unit: form.traitUnit },
    ...(form.control.trim() ? { control: form.control.trim() } : {}),
    ...(Object.keys(factorUnits).length > 0 ? { factorUnits } : {}),
    ...(form.columns.design ? {} : { design: form.design }),
    ...(form.crop.trim() ? { crop: form.crop.trim() } : {}),
    ...(sheet ? { sheet } : {}),
  };
}
