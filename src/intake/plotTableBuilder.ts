// Turns data rows into a validated, unit-converted plot table. Rows are fed one at a time
// (cells in a reused array); per-trial and per-treatment state is kept in maps with a
// one-entry cache, since files are usually sorted by trial and often by treatment.
import type { FactorInfo, LevelValue, TreatmentInfo, TrialDesign } from '../engine/types.js';
import { parseDesignName, DESIGN_NAMES } from './designs.js';
import { isMissingText, parseDecimal, type DecimalMode } from './numbers.js';
import type { PlotColumns } from './plotColumns.js';
import type { ProblemList } from './problems.js';
import type { ImportMapping, ParsedObservation, ParsedPlot, ParsedPlotTable, ParsedTrait, ParsedTrial } from './types.js';
import { findUnit, toCanonical } from './units.js';

interface TraitState {
  readonly trait: ParsedTrait;
  readonly index: number;
  readonly factor: number;
  readonly fileUnit: string;
}

interface TreatmentState {
  readonly code: string;
  /** Position in first-seen order; part of numeric plot keys. */
  readonly id: number;
  readonly firstRow: number;
  /** Raw factor cells of the first row with this code, in columns.factors order. */
  readonly raw: string[];
}

interface TrialState {
  readonly key: string;
  readonly firstRow: number;
  readonly siteRaw: string;
  readonly site: string;
  readonly yearRaw: string;
  readonly year: number;
  /** Design from a design cell or the mapping; null = infer from the layout columns. */
  designRaw: string;
  design: TrialDesign | null;
  hasBlock: boolean;
  rowWithoutBlock: number;
  rowWithoutRowCol: number;
  /** Plot key -> plot index; keys are small integers where possible (cheaper than strings). */
  readonly plotIndex: Map<number | string, number>;
  /** Block label -> id, which also shares one string per block among the trial's plots. */
  readonly blocks: Map<string, { readonly label: string; readonly id: number }>;
  /** Plots per treatment id. */
  readonly plotsPerTreatment: number[];
  readonly covariates: (string | null)[];
  readonly covariateRows: number[];
}

const NUMBER_HINT: Record<DecimalMode, string> = {
  point: 'a number written with a decimal point (e.g. 12.4) is expected',
  comma: 'a number written with a decimal comma (e.g. 12,4) is expected, as the mapping sets decimalComma',
  either: 'a number is expected',
};

/** Two small non-negative integers as one small-integer map key; null when they do not fit. */
function smallPair(a: number, b: number): number | null {
  return a >= 0 && b >= 0 && a < 16384 && b < 16384 ? a * 16384 + b : null;
}

/** Cell `i` of a row; '' when the column is not mapped (-1) or the row is short. */
function cellAt(f: readonly string[], i: number): string {
  return i >= 0 && i < f.length ? f[i] : '';
}

function parseYear(text: string, mode: DecimalMode): number {
  const y = parseDecimal(text, mode);
  return Number.isInteger(y) && y >= 1000 && y <= 9999 ? y : NaN;
}

export class PlotTableBuilder {
  private readonly traits = new Map<string, TraitState>();
  private readonly traitList: TraitState[] = [];
  private readonly acceptAnyTrait: boolean;
  private readonly treatments = new Map<string, TreatmentState>();
  private readonly allowedTreatments: Set<string> | null;
  private readonly trials = new Map<string, TrialState>();
  private readonly plots: ParsedPlot[] = [];
  private readonly observations: ParsedObservation[] = [];
  /** Per plot, a bit per trait already observed (traits 0..29); later traits in observedMore. */
  private readonly observedMask: number[] = [];
  private readonly observedMore = new Set<string>();
  private readonly covariateNumeric: boolean[];
  private readonly mappingDesign: TrialDesign | null;
  private lastTrial: TrialState | null = null;
  private lastSiteRaw = '';
  private lastYearRaw = '';
  private lastTreatment: TreatmentState | null = null;
  private reportedNoPlotKey = false;
  rowsRead = 0;

  constructor(
    private readonly cols: PlotColumns,
    private readonly mapping: ImportMapping,
    private readonly mode: DecimalMode,
    private readonly problems: ProblemList,
  ) {
    this.acceptAnyTrait = cols.trait >= 0 && mapping.traits === undefined;
    const declared = cols.trait >= 0 ? (mapping.traits ?? []) : [mapping.trait ?? { name: mapping.columns.response ?? 'value', unit: 'as-is' }];
    for (const t of declared) this.declareTrait(t.name, t.unit, t.kind, t.lower, t.upper);
    this.allowedTreatments = mapping.treatments ? new Set(mapping.treatments) : null;
    this.covariateNumeric = cols.covariates.map(() => true);
    this.mappingDesign = mapping.design ?? null;
  }

  private declareTrait(name: string, unit: string, kind?: ParsedTrait['kind'], lower?: number, upper?: number): TraitState {
    // Units were checked with the mapping (checkMapping), so toCanonical cannot throw here.
    const conv = toCanonical(unit, this.mapping.crop);
    const resolvedKind = kind ?? (conv.to === '%' ? 'percent' : 'continuous');
    const lo = lower !== undefined ? lower * conv.factor : resolvedKind === 'percent' || resolvedKind === 'count' ? 0 : null;
    const hi = upper !== undefined ? upper * conv.factor : resolvedKind === 'percent' && conv.to === '%' ? 100 : null;
    const state: TraitState = {
      trait: { name, unit: conv.to, kind: resolvedKind, lower: lo, upper: hi },
      index: this.traitList.length,
      factor: conv.factor,
      fileUnit: unit,
    };
    this.traits.set(name, state);
    this.traitList.push(state);
    return state;
  }

  private cellName(index: number): string {
    return this.cols.header[index] ?? `column ${index + 1}`;
  }

  /** Validates one data row and adds its plot and observation. */
  addRow(f: string[], rowNo: number): void {
    const cols = this.cols;
    const problems = this.problems;
    const n = f.length;
    // Blank rows (often trailing ones from spreadsheets) are not data.
    let blank = true;
    for (let i = 0; i < n; i++) {
      if (f[i] !== '') {
        blank = false;
        break;
      }
    }
    if (blank) return;
    this.rowsRead++;
    for (let i = cols.header.length; i < n; i++) {
      if (f[i] !== '') {
        problems.add(rowNo, null, f[i], 'extra-cells', `the row has ${n} cells but the header only ${cols.header.length}; check the delimiter or quoting`);
        break;
      }
    }
    const trial = this.trialOf(f, rowNo);
    const treatment = this.treatmentOf(cellAt(f, cols.treatment), f, rowNo);

    // Layout: block, row, column, plot id.
    const blockText = cellAt(f, cols.block);
    const plotRow = this.layoutNumber(cols.row, cellAt(f, cols.row), rowNo);
    const plotCol = this.layoutNumber(cols.col, cellAt(f, cols.col), rowNo);
    const plotId = cellAt(f, cols.plot);
    if (cols.plot >= 0 && plotId === '') problems.add(rowNo, this.cellName(cols.plot), '', 'missing-value', 'the plot identifier is empty');

    // Trait and value.
    let trait: TraitState | undefined;
    if (cols.trait >= 0) {
      const name = cellAt(f, cols.trait);
      trait = this.traits.get(name);
      if (trait === undefined) {
        if (name === '') problems.add(rowNo, this.cellName(cols.trait), '', 'missing-value', 'the trait name is empty');
        else if (this.acceptAnyTrait) trait = this.declareTrait(name, 'as-is');
        else problems.add(rowNo, this.cellName(cols.trait), name, 'unknown-trait', `trait "${name}" is not listed under "traits" in the mapping (listed: ${this.traitList.map((t) => t.trait.name).join(', ')})`);
      }
    } else trait = this.traitList[0];
    const value = trait === undefined ? null : this.valueOf(cellAt(f, cols.response), trait, rowNo);

    if (trial === null || treatment === null || trait === undefined) return;

    let block = blockText;
    let blockId = -1;
    if (blockText !== '') {
      trial.hasBlock = true;
      let b = trial.blocks.get(blockText);
      if (b === undefined) {
        b = { label: blockText, id: trial.blocks.size };
        trial.blocks.set(blockText, b);
      }
      block = b.label;
      blockId = b.id;
    } else if (trial.rowWithoutBlock === 0) trial.rowWithoutBlock = rowNo;
    if ((plotRow === null || plotCol === null) && trial.rowWithoutRowCol === 0) trial.rowWithoutRowCol = rowNo;

    // Plot identity: plot id, else row+column, else block+treatment.
    let key: number | string | null = null;
    let keyColumn = -1;
    if (cols.plot >= 0) {
      if (plotId !== '') {
        key = plotId;
        keyColumn = cols.plot;
      }
    } else if (plotRow !== null && plotCol !== null) {
      key = smallPair(plotRow, plotCol) ?? `${plotRow}\u0001${plotCol}`;
      keyColumn = cols.row;
    } else if (blockId >= 0) {
      key = smallPair(blockId, treatment.id) ?? `${block}\u0000${treatment.code}`;
      keyColumn = cols.block;
    }

    let plotIndex = key === null ? undefined : trial.plotIndex.get(key);
    if (plotIndex !== undefined) {
      const existing = this.plots[plotIndex];
      const what = cols.plot >= 0 ? `plot "${plotId}"` : plotRow !== null && plotCol !== null ? `row ${plotRow}, column ${plotCol}` : `block "${block}" and treatment "${treatment.code}"`;
      if (cols.trait < 0 || this.wasObserved(plotIndex, trait.index)) {
        problems.add(rowNo, this.cellName(keyColumn), f[keyColumn], 'duplicate-plot', `trial "${trial.key}" already has ${what} on row ${existing.sourceRow}${cols.trait >= 0 ? ` for trait "${trait.trait.name}"` : ''}`);
        return;
      }
      if (existing.treatment !== treatment.code || existing.block !== (block === '' ? null : block)) {
        problems.add(rowNo, this.cellName(cols.treatment), treatment.code, 'plot-disagrees', `${what} of trial "${trial.key}" has treatment "${existing.treatment}", block "${existing.block ?? ''}" on row ${existing.sourceRow}`);
        return;
      }
    } else {
      if (cols.trait >= 0 && key === null && !this.reportedNoPlotKey) {
        this.reportedNoPlotKey = true;
        problems.add(rowNo, this.cellName(cols.trait), trait.trait.name, 'no-plot-identifier', 'with one row per plot and trait, each row needs a plot column, row and column, or a block to tie its traits to one plot');
      }
      plotIndex = this.plots.length;
      this.plots.push({ trialKey: trial.key, treatment: treatment.code, block: block === '' ? null : block, row: plotRow, col: plotCol, plotId: cols.plot >= 0 ? plotId : null, sourceRow: rowNo });
      if (key !== null) trial.plotIndex.set(key, plotIndex);
      const reps = trial.plotsPerTreatment;
      while (reps.length <= treatment.id) reps.push(0);
      reps[treatment.id]++;
    }
    if (cols.trait >= 0) this.markObserved(plotIndex, trait.index);
    this.observations.push({ plot: plotIndex, trait: trait.trait.name, value });
  }

  private wasObserved(plot: number, trait: number): boolean {
    if (trait < 30) return ((this.observedMask[plot] ?? 0) & (1 << trait)) !== 0;
    return this.observedMore.has(`${plot}:${trait}`);
  }

  private markObserved(plot: number, trait: number): void {
    if (trait < 30) {
      while (this.observedMask.length <= plot) this.observedMask.push(0);
      this.observedMask[plot] |= 1 << trait;
    } else this.observedMore.add(`${plot}:${trait}`);
  }

  private trialOf(f: string[], rowNo: number): TrialState | null {
    const cols = this.cols;
    const n = f.length;
    const siteRaw = cols.site >= 0 && cols.site < n ? f[cols.site] : '';
    const yearRaw = cols.year >= 0 && cols.year < n ? f[cols.year] : '';
    let trial: TrialState | null | undefined;
    if (cols.trial >= 0) {
      const key = cols.trial < n ? f[cols.trial] : '';
      if (key === '') {
        this.problems.add(rowNo, this.cellName(cols.trial), '', 'missing-value', 'the trial is empty');
        return null;
      }
      trial = this.lastTrial !== null && this.lastTrial.key === key ? this.lastTrial : this.trials.get(key);
      if (trial === undefined) trial = this.newTrial(key, siteRaw === '' ? key : siteRaw, yearRaw, rowNo);
      else {
        if (cols.site >= 0 && siteRaw !== trial.siteRaw) {
          this.problems.add(rowNo, this.cellName(cols.site), siteRaw, 'trial-disagrees', `trial "${key}" has site "${trial.siteRaw}" on row ${trial.firstRow}`);
        }
        if (cols.year >= 0 && yearRaw !== trial.yearRaw && parseYear(yearRaw, this.mode) !== trial.year) {
          this.problems.add(rowNo, this.cellName(cols.year), yearRaw, 'trial-disagrees', `trial "${key}" has year "${trial.yearRaw}" on row ${trial.firstRow}`);
        }
      }
    } else {
      if (this.lastTrial !== null && siteRaw === this.lastSiteRaw && yearRaw === this.lastYearRaw) trial = this.lastTrial;
      else {
        if (siteRaw === '') {
          this.problems.add(rowNo, this.cellName(cols.site), '', 'missing-value', 'the site is empty');
          return null;
        }
        const year = parseYear(yearRaw, this.mode);
        if (Number.isNaN(year)) {
          this.problems.add(rowNo, this.cellName(cols.year), yearRaw, 'bad-year', 'the year must be a four-digit whole number such as 2021');
          return null;
        }
        const key = `${siteRaw}-${year}`;
        trial = this.trials.get(key) ?? this.newTrial(key, siteRaw, yearRaw, rowNo);
        this.lastSiteRaw = siteRaw;
        this.lastYearRaw = yearRaw;
      }
    }
    if (trial === null) return null;
    this.lastTrial = trial;
    if (cols.design >= 0) this.checkDesignCell(trial, cols.design < n ? f[cols.design] : '', rowNo);
    this.checkCovariates(trial, f, rowNo);
    return trial;
  }

  private newTrial(key: string, site: string, yearRaw: string, rowNo: number): TrialState | null {
    let year = 0;
    if (this.cols.year >= 0) {
      year = parseYear(yearRaw, this.mode);
      if (Number.isNaN(year)) {
        this.problems.add(rowNo, this.cellName(this.cols.year), yearRaw, 'bad-year', 'the year must be a four-digit whole number such as 2021');
        return null;
      }
    }
    const trial: TrialState = {
      key,
      firstRow: rowNo,
      siteRaw: this.cols.site >= 0 ? site : '',
      site,
      yearRaw,
      year,
      designRaw: '',
      design: this.mappingDesign,
      hasBlock: false,
      rowWithoutBlock: 0,
      rowWithoutRowCol: 0,
      plotIndex: new Map(),
      blocks: new Map(),
      plotsPerTreatment: [],
      covariates: this.cols.covariates.map(() => null),
      covariateRows: this.cols.covariates.map(() => 0),
    };
    this.trials.set(key, trial);
    return trial;
  }

  private checkDesignCell(trial: TrialState, text: string, rowNo: number): void {
    if (text === '' || text === trial.designRaw) return;
    const column = this.cellName(this.cols.design);
    const design = parseDesignName(text);
    if (design === undefined) {
      this.problems.add(rowNo, column, text, 'unknown-design', `unknown design; use one of: ${DESIGN_NAMES.join(', ')}`);
      return;
    }
    if (trial.designRaw === '') {
      trial.designRaw = text;
      trial.design = design;
    } else if (design !== trial.design) {
      this.problems.add(rowNo, column, text, 'trial-disagrees', `trial "${trial.key}" has design "${trial.designRaw}" on an earlier row`);
    }
  }

  private checkCovariates(trial: TrialState, f: string[], rowNo: number): void {
    const covs = this.cols.covariates;
    for (let k = 0; k < covs.length; k++) {
      const i = covs[k].index;
      const text = i < f.length ? f[i] : '';
      if (text === '') continue; // a covariate may be given on one row of the trial only
      const seen = trial.covariates[k];
      if (seen === null) {
        trial.covariates[k] = text;
        trial.covariateRows[k] = rowNo;
        if (this.covariateNumeric[k] && Number.isNaN(parseDecimal(text, this.mode))) this.covariateNumeric[k] = false;
      } else if (seen !== text) {
        const a = parseDecimal(seen, this.mode);
        if (Number.isNaN(a) || a !== parseDecimal(text, this.mode)) {
          this.problems.add(rowNo, covs[k].column, text, 'covariate-not-constant', `trial "${trial.key}" has ${covs[k].column} "${seen}" on row ${trial.covariateRows[k]}; a trial covariate must be the same on every row of the trial`);
        }
      }
    }
  }

  private treatmentOf(code: string, f: string[], rowNo: number): TreatmentState | null {
    const column = this.cellName(this.cols.treatment);
    if (code === '') {
      this.problems.add(rowNo, column, '', 'unknown-treatment', 'the treatment code is empty');
      return null;
    }
    let t = this.lastTreatment !== null && this.lastTreatment.code === code ? this.lastTreatment : this.treatments.get(code);
    const factors = this.cols.factors;
    if (t === undefined) {
      if (this.allowedTreatments !== null && !this.allowedTreatments.has(code)) {
        this.problems.add(rowNo, column, code, 'unknown-treatment', `treatment "${code}" is not among the treatments the mapping lists`);
        return null;
      }
      t = { code, id: this.treatments.size, firstRow: rowNo, raw: factors.map((fc) => (fc.index < f.length ? f[fc.index] : '')) };
      this.treatments.set(code, t);
    } else {
      for (let k = 0; k < factors.length; k++) {
        const i = factors[k].index;
        const text = i < f.length ? f[i] : '';
        const first = t.raw[k];
        if (text === first) continue;
        const a = parseDecimal(text, this.mode);
        if (!Number.isNaN(a) && a === parseDecimal(first, this.mode)) continue;
        this.problems.add(rowNo, factors[k].column, text, 'treatment-levels-disagree', `treatment "${code}" has ${factors[k].name} "${first}" on row ${t.firstRow}`);
      }
    }
    this.lastTreatment = t;
    return t;
  }

  private layoutNumber(index: number, text: string, rowNo: number): number | null {
    if (index < 0 || text === '') return null;
    const v = parseDecimal(text, this.mode);
    if (!Number.isInteger(v)) {
      this.problems.add(rowNo, this.cellName(index), text, Number.isNaN(v) ? 'not-a-number' : 'not-an-integer', 'a row or column position must be a whole number');
      return null;
    }
    return v;
  }

  private valueOf(text: string, trait: TraitState, rowNo: number): number | null {
    if (isMissingText(text)) return null;
    const raw = parseDecimal(text, this.mode);
    const column = this.cellName(this.cols.response);
    if (Number.isNaN(raw)) {
      this.problems.add(rowNo, column, text, 'not-a-number', `not a number: ${NUMBER_HINT[this.mode]}`);
      return null;
    }
    if (!Number.isFinite(raw)) {
      this.problems.add(rowNo, column, text, 'not-a-number', 'the number is too large');
      return null;
    }
    const v = trait.factor === 1 ? raw : raw * trait.factor;
    const t = trait.trait;
    if ((t.lower !== null && v < t.lower) || (t.upper !== null && v > t.upper)) {
      const range = `${t.lower ?? '-inf'} to ${t.upper ?? 'inf'} ${t.unit}`;
      this.problems.add(rowNo, column, text, 'out-of-bounds', `trait "${t.name}" must lie within ${range}${trait.factor !== 1 ? ` (value converted from ${trait.fileUnit}: ${v})` : ''}`);
      return null;
    }
    if (t.kind === 'count' && !Number.isInteger(v)) {
      this.problems.add(rowNo, column, text, 'not-a-count', `trait "${t.name}" is a count: a whole number is expected`);
      return null;
    }
    return v;
  }

  /** Whole-file checks and the final table; call after the last row. */
  finish(file: string, sha256: string): ParsedPlotTable {
    const problems = this.problems;
    const cols = this.cols;
    const treatmentColumn = this.cellName(cols.treatment);
    if (this.rowsRead === 0) problems.add(0, null, null, 'empty-file', 'the file has a header but no data rows');
    const control = this.mapping.control ?? null;
    if (control !== null && this.rowsRead > 0 && !this.treatments.has(control)) {
      problems.add(0, treatmentColumn, control, 'unknown-treatment', `the control "${control}" named in the mapping never appears in the treatment column`);
    }
    const trials: ParsedTrial[] = [];
    for (const t of this.trials.values()) {
      const design = t.design ?? (t.hasBlock ? 'randomised-blocks' : t.rowWithoutRowCol === 0 && cols.row >= 0 && cols.col >= 0 ? 'row-column' : 'completely-randomised');
      if (design === 'randomised-blocks' && t.rowWithoutBlock > 0) {
        problems.add(t.rowWithoutBlock, cols.block >= 0 ? this.cellName(cols.block) : null, '', 'missing-block', `trial "${t.key}" is laid out in randomised blocks, so every plot needs a block`);
      }
      if ((design === 'row-column' || design === 'latin-square') && t.rowWithoutRowCol > 0) {
        problems.add(t.rowWithoutRowCol, cols.row >= 0 ? this.cellName(cols.row) : null, '', 'missing-row-column', `trial "${t.key}" has a ${design} design, so every plot needs a row and a column`);
      }
      let replicated = false;
      for (const count of t.plotsPerTreatment) if (count > 1) replicated = true;
      if (!replicated && t.plotsPerTreatment.length > 0) {
        problems.add(t.firstRow, treatmentColumn, t.key, 'single-replicate', `trial "${t.key}" has every treatment only once: with a single replicate there is no error term`);
      }
      trials.push({ key: t.key, site: t.site, year: t.year, design });
    }
    problems.throwIfAny();
    const { factors, treatments } = this.factorsAndTreatments();
    return {
      file,
      sha256,
      rowsRead: this.rowsRead,
      protocol: this.mapping.protocol ?? 'default',
      control,
      traits: this.traitList.map((t) => t.trait),
      factors,
      treatments,
      trials,
      plots: this.plots,
      observations: this.observations,
      trialCovariates: this.covariateTable(),
      mapping: this.mapping,
    };
  }

  private factorsAndTreatments(): { factors: FactorInfo[]; treatments: TreatmentInfo[] } {
    const list = [...this.treatments.values()];
    const factors: FactorInfo[] = [];
    const scales: number[] = [];
    this.cols.factors.forEach((fc, k) => {
      const numeric = list.every((t) => t.raw[k] === '' || !Number.isNaN(parseDecimal(t.raw[k], this.mode)));
      const unitText = this.mapping.factorUnits?.[fc.name];
      let unit = unitText;
      let scale = 1;
      const known = unitText === undefined ? undefined : findUnit(unitText);
      if (numeric && known !== undefined && known.dimension !== 'none' && known.perBushelLb !== true) {
        unit = known.canonical;
        scale = known.factor;
      }
      scales.push(scale);
      factors.push(unit === undefined ? { name: fc.name, kind: numeric ? 'numeric' : 'categorical' } : { name: fc.name, kind: numeric ? 'numeric' : 'categorical', unit });
    });
    const treatments = list.map((t): TreatmentInfo => {
      const levels: Record<string, LevelValue> = {};
      this.cols.factors.forEach((fc, k) => {
        const raw = t.raw[k];
        levels[fc.name] = raw === '' ? null : factors[k].kind === 'numeric' ? parseDecimal(raw, this.mode) * scales[k] : raw;
      });
      return { code: t.code, levels };
    });
    return { factors, treatments };
  }

  private covariateTable(): Record<string, Record<string, number | string | null>> {
    const out: Record<string, Record<string, number | string | null>> = {};
    const covs = this.cols.covariates;
    if (covs.length === 0) return out;
    for (const t of this.trials.values()) {
      const row: Record<string, number | string | null> = {};
      covs.forEach((c, k) => {
        const raw = t.covariates[k];
        row[c.name] = raw === null ? null : this.covariateNumeric[k] ? parseDecimal(raw, this.mode) : raw;
      });
      out[t.key] = row;
    }
    return out;
  }
}
