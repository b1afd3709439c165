// Final shapes of a plot table's protocol and covariates: factor kinds are inferred from the
// levels seen (all numbers -> numeric), numeric levels are converted to canonical units,
// empty cells mean "not applicable".
import type { FactorInfo, LevelValue, TreatmentInfo } from '../engine/types.js';
import { parseDecimal, type DecimalMode } from './numbers.js';
import type { NamedColumn } from './plotColumns.js';
import { findUnit } from './units.js';

export interface SeenTreatment {
  readonly code: string;
  /** Raw factor cells, in the order of the factor columns. */
  readonly raw: readonly string[];
}

export function factorsAndTreatments(
  seen: readonly SeenTreatment[],
  factorColumns: readonly NamedColumn[],
  factorUnits: Readonly<Record<string, string>> | undefined,
  mode: DecimalMode,
): { factors: FactorInfo[]; treatments: TreatmentInfo[] } {
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
      levels[fc.name] = raw === '' ? null : factors[k].kind === 'numeric' ? parseDecimal(raw, mode) * scales[k] : raw;
    });
    return { code: t.code, levels };
  });
  return { factors, treatments };
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
