// Rebuild a ParsedPlotTable from exportTrait's output, the way a reader would see that file:
// written here independently of src/intake so the store's round trip is tested on its own.
import { createHash } from 'node:crypto';
import type { FactorInfo, LevelValue, TreatmentInfo, TrialDesign } from '../../../src/engine/types.js';
import type { ParsedObservation, ParsedPlot, ParsedPlotTable, ParsedTrial } from '../../../src/intake/types.js';
import type { ExportedTrait } from '../../../src/store/index.js';

export function tableFromExport(exp: ExportedTrait, file = 'exported.csv'): ParsedPlotTable {
  const m = exp.mapping;
  const col = (name: string | undefined): number => {
    const i = name === undefined ? -1 : exp.header.indexOf(name);
    if (i < 0) throw new Error(`export has no column "${name}"`);
    return i;
  };
  const c = m.columns;
  const [iSite, iYear, iTrial, iDesign, iBlock, iRow, iCol, iTrt, iValue] = [c.site, c.year, c.trial, c.design, c.block, c.row, c.col, c.treatment, c.response].map(col);
  const iPlot = c.plot === undefined ? -1 : col(c.plot);
  const factorCols = Object.entries(c.factors ?? {}).map(([name, column]) => ({ name, i: col(column) }));
  const covariateCols = (c.covariates ?? []).map((name) => ({ name, i: col(name) }));

  const trials = new Map<string, ParsedTrial>();
  const treatments = new Map<string, TreatmentInfo>();
  const trialCovariates: Record<string, Record<string, number | string | null>> = {};
  const plots: ParsedPlot[] = [];
  const observations: ParsedObservation[] = [];
  exp.rows.forEach((r, k) => {
    const key = String(r[iTrial]);
    if (!trials.has(key)) {
      trials.set(key, { key, site: String(r[iSite]), year: Number(r[iYear]), design: r[iDesign] as TrialDesign });
      trialCovariates[key] = Object.fromEntries(covariateCols.map(({ name, i }) => [name, r[i]]));
    }
    const code = String(r[iTrt]);
    if (!treatments.has(code)) treatments.set(code, { code, levels: Object.fromEntries(factorCols.map(({ name, i }) => [name, r[i] as LevelValue])) });
    observations.push({ plot: plots.length, trait: m.trait!.name, value: r[iValue] as number | null });
    plots.push({
      trialKey: key,
      treatment: code,
      block: r[iBlock] === null ? null : String(r[iBlock]),
      row: r[iRow] as number | null,
      col: r[iCol] as number | null,
      ...(iPlot >= 0 ? { plotId: r[iPlot] === null ? null : String(r[iPlot]) } : {}),
      sourceRow: k + 2,
    });
  });
  const factors: FactorInfo[] = factorCols.map(({ name }) => {
    const numeric = [...treatments.values()].every((t) => t.levels[name] === null || typeof t.levels[name] === 'number');
    const unit = m.factorUnits?.[name];
    return unit === undefined ? { name, kind: numeric ? 'numeric' : 'categorical' } : { name, kind: numeric ? 'numeric' : 'categorical', unit };
  });
  const t = m.trait!;
  return {
    file,
    sha256: createHash('sha256').update(JSON.stringify(exp)).digest('hex'),
    rowsRead: exp.rows.length,
    protocol: m.protocol ?? 'default',
    control: m.control ?? null,
    traits: [{ name: t.name, unit: t.unit, kind: t.kind ?? 'continuous', lower: t.lower ?? null, upper: t.upper ?? null }],
    factors,
    treatments: [...treatments.values()],
    trials: [...trials.values()],
    plots,
    observations,
    trialCovariates,
    mapping: m,
  };
}
