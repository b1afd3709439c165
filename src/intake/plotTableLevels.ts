// Final shapes of a plot table's protocol and covariates: factor kinds are inferred from the
// levels seen (all numbers -> numeric), numeric levels are converted to canonical units,
// empty cells mean "not applicable" — except for the control's numeric factors (the rule below).
import type { FactorInfo, LevelValue, TreatmentInfo } from '../engine/types.js';
import { parseDecimal, type DecimalMode } from './numbers.js';
import type { NamedColumn } from './plotColumns.js';
import { findUnit } from './units.js';

export interface SeenTreatment {
  readonly code: string;
  /** Raw factor cells, in the order of the factor columns. */
  readonly raw: readonly string[];
}

/**
 * The one rule for the untreated control: it received none of the input, so a blank level of a
 * numeric factor (a rate) is 0 for the control, unless the mapping's controlLevels gives another
 * value (or null: "not applicable", which keeps the control out of trends over that factor).
 * Applied alike on import and on `analyze --data`, so a blank and a written 0 mean the same.
 */
export function controlLevel(factor: string, controlLevels: Readonly<Record<string, number | null>> | undefined): number | null {
  const given = controlLevels?.[factor];
  return given === undefined ? 0 : given;
}

export interface ControlRule {
  readonly control: string | null;
  readonly controlLevels?: Readonly<Record<string, number | null>>;
}

export function factorsAndTreatments(
  seen: readonly SeenTreatment[],
  factorColumns: readonly NamedColumn[],
  factorUnits: Readonly<Record<string, string>> | undefined,
  mode: DecimalMode,
  rule: ControlRule = { control: null },
): { factors: FactorInfo[]; treatments: TreatmentInfo[]; scales: number[] } {
  const factors: FactorInfo[] = [];
  const scales: number[] = [];
  factorColumns.forEach((fc, k) => {
    const numeric = seen.every((t) => t.raw[k] === '' || !Number.isNaN(parseDecimal(t.raw[k], mode)));
    const kind = numeric ? 'numeric' : 'categorical';
    // Own keys only: a factor named "toString" must not find Object.prototype.toString.
    const unitText = factorUnits !== undefined && Object.hasOwn(factorUnits, fc.name) ? factorUnits[fc.name] : undefined;
    const known = unitText === undefined ? undefined : findUnit(unitText);
    // A rate in lb/ac is stored in kg/ha; units we do not know (e.g. "days after sowing") stay as written.
    const convert = numeric && known !== undefined && known.dimension !== 'none' && known.perBushelLb !== true;
    scales.push(convert ? known.factor : 1);
    const unit = convert ? known.canonical : unitText;
    factors.push(unit === undefined ? { name: fc.name, kind } : { name: fc.name, kind, unit });
  });
  const treatments = seen.map((t): TreatmentInfo => {
    const levels: Record<string, LevelValue> = {};
    factorColumns.forEach((fc, k) => {
      const raw = t.raw[k];
      const numeric = factors[k].kind === 'numeric';
      if (raw === '' && numeric && t.code === rule.control) {
        // controlLevels are written in the factor's file unit, like the cells.
        const level = controlLevel(fc.name, rule.controlLevels);
        levels[fc.name] = level === null ? null : level * scales[k];
      } else levels[fc.name] = raw === '' ? null : numeric ? parseDecimal(raw, mode) * scales[k] : raw;
    });
    return { code: t.code, levels };
  });
  return { factors, treatments, scales };
}

export interface SeenTrialCovariates {
  readonly key: string;
  /** Raw covariate cells (null = never given), in the order of the covariate columns. */
  readonly covariates: readonly (string | null)[];
}

/** trial key -> covariate name -> value; a column is numeric when all its values are numbers. */
export function covariateTable(
  trials: Iterable<SeenTrialCovariates>,
  columns: readonly NamedColumn[],
  numeric: readonly boolean[],
  mode: DecimalMode,
): Record<string, Record<string, number | string | null>> {
  const out: Record<string, Record<string, number | string | null>> = {};
  if (columns.length === 0) return out;
  for (const t of trials) {
    const row: Record<string, number | string | null> = {};
    columns.forEach((c, k) => {
      const raw = t.covariates[k];
      row[c.name] = raw === null ? null : numeric[k] ? parseDecimal(raw, mode) : raw;
    });
    out[t.key] = row;
  }
  return out;
}
