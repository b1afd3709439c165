// Turns data rows into a validated, unit-converted plot table. Rows are fed one at a time
// (cells read in place); per-trial and per-treatment state is kept with a one-entry cache,
// since files are usually sorted by trial and often by treatment.
import type { TrialDesign } from '../engine/types.js';
import { parseDesignName, DESIGN_NAMES } from './designs.js';
import { parseDecimal, type DecimalMode } from './numbers.js';
import type { PlotColumns } from './plotColumns.js';
import type { RowCells } from './rowCells.js';
import type { ProblemList } from './problems.js';
import type { PlotSink } from './plotSink.js';
import type { ImportMapping, ParsedPlotTable, ParsedTrait, ParsedTrial } from './types.js';
import { controlLevel, covariateTable, factorsAndTreatments } from './plotTableLevels.js';
import { toCanonical } from './units.js';
import { didYouMean, listNames } from '../spec/closest.js';
import { covariateCellProblem } from './covariateCells.js';

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

interface BlockState {
  readonly label: string;
  readonly id: number;
  /** Plot index + 1 (0 = none yet) by treatment id below DENSE_TREATMENTS; see blockSlots. */
  readonly plotByTreatment: number[];
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
  /** Plot key -> plot index; keys are small integers where possible (cheaper than strings). Made on first use. */
  plotIndex: Map<number | string, number> | null;
  /** Block label -> block, which also shares one string per block among the trial's plots. */
  readonly blocks: Map<string, BlockState>;
  lastBlock: BlockState | null;
  /** Plots per treatment id, for ids below DENSE_TREATMENTS; the rest in morePlotsPerTreatment. */
  readonly plotsPerTreatment: number[];
  morePlotsPerTreatment: Map<number, number> | null;
  /** Treatment code -> its factor cells in this trial, where a numeric level differs from the treatment's first-seen one. */
  applied: Map<string, string[]> | null;
  readonly covariates: (string | null)[];
  readonly covariateRows: number[];
}

const NUMBER_HINT: Record<DecimalMode, string> = {
  point: 'a number written with a decimal point (e.g. 12.4) is expected',
  comma: 'a number written with a decimal comma (e.g. 12,4) is expected, as the mapping sets decimalComma',
  either: 'a number is expected',
};

/** A number written with a decimal comma (12,4), refused in a file read with decimal points. */
const DECIMAL_COMMA = /^\s*[-+]?\d+,\d+\s*$/;
const DECIMAL_COMMA_HINT = '; it looks like a decimal comma: if the file writes decimals that way, set "decimalComma": true in the mapping (with analyze --data, in the spec\'s "reading")';

/** Two small non-negative integers as one small-integer map key; null when they do not fit. */
function smallPair(a: number, b: number): number | null {
  return a >= 0 && b >= 0 && a < 16384 && b < 16384 ? a * 16384 + b : null;
}

/**
 * Treatment ids counted in a per-trial array; beyond this a map, so a damaged file with
 * thousands of codes cannot make every trial's array as long as the code list.
 */
const DENSE_TREATMENTS = 256;

/** A validated table without its plots and values (those went to the builder's sink). */
export type PlotTableSummary = Omit<ParsedPlotTable, 'file' | 'sha256' | 'plots' | 'observations'>;

function parseYear(text: string, mode: DecimalMode): number {
  const y = parseDecimal(text, mode);
  return Number.isInteger(y) && y >= 1000 && y <= 9999 ? y : NaN;
}

export class PlotTableBuilder {
  private readonly traits = new Map<string, TraitState>();
  private readonly traitList: TraitState[] = [];
  private readonly acceptAnyTrait: boolean;
  private readonly treatments = new Map<string, TreatmentState>();
  private readonly treatmentList: TreatmentState[] = [];
  private readonly allowedTreatments: Set<string> | null;
  /** First row whose numeric level differs from its treatment's first-seen level (0 = none). */
  private firstAppliedRow = 0;
  private readonly trials = new Map<string, TrialState>();
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
  /**
   * Whether a block+treatment plot key lives in its block's plotByTreatment array instead of
   * the trial's plotIndex map (a map per trial costs a large share of reading a big file). Only
   * when row+column keys cannot occur, as those share the map's number keys.
   */
  private readonly blockSlots: boolean;
  rowsRead = 0;

  constructor(
    private readonly cols: PlotColumns,
    private readonly mapping: ImportMapping,
    private readonly mode: DecimalMode,
    private readonly problems: ProblemList,
    private readonly sink: PlotSink,
  ) {
    this.acceptAnyTrait = cols.trait >= 0 && mapping.traits === undefined;
    const declared = cols.trait >= 0 ? (mapping.traits ?? []) : [mapping.trait ?? { name: mapping.columns.response ?? 'value', unit: 'as-is' }];
    for (const t of declared) this.declareTrait(t.name, t.unit, t.kind, t.lower, t.upper);
    this.allowedTreatments = mapping.treatments ? new Set(mapping.treatments) : null;
    this.covariateNumeric = cols.covariates.map(() => true);
    this.mappingDesign = mapping.design ?? null;
    this.blockSlots = !(cols.plot < 0 && cols.row >= 0 && cols.col >= 0);
  }

  private declareTrait(name: string, unit: string, kind?: ParsedTrait['kind'], lower?: number, upper?: number): TraitState {
    // Units were checked with the mapping (checkMapping), so toCanonical cannot throw here.
    const conv = toCanonical(unit, this.mapping.crop);
    const resolvedKind = kind ?? (conv.to === '%' ? 'percent' : 'continuous');
    const lo = lower !== undefined ? lower * conv.factor : resolvedKind === 'percent' || resolvedKind === 'count' ? 0 : null;
    const hi = upper !== undefined ? upper * conv.factor : resolvedKind === 'percent' && (conv.to === '%' || conv.to === 'as-is') ? 100 : null;
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
  addRow(r: RowCells, rowNo: number): void {
    const cols = this.cols;
    const problems = this.problems;
    const n = r.count;
    // Blank rows (often trailing ones from spreadsheets) are not data.
    let blank = true;
    for (let i = 0; i < n; i++) {
      if (!r.isEmpty(i)) {
        blank = false;
        break;
      }
    }
    if (blank) return;
    this.rowsRead++;
    for (let i = cols.header.length; i < n; i++) {
      if (!r.isEmpty(i)) {
        problems.add(rowNo, null, r.text(i), 'extra-cells', `the row has ${n} cells but the header only ${cols.header.length}; check the delimiter or quoting`);
        break;
      }
    }

    const trial = this.trialOf(r, rowNo);
    const treatment = this.treatmentOf(r, rowNo, trial);

    // Layout: block, row, column, plot id.
    const plotRow = this.layoutNumber(r, cols.row, rowNo);
    const plotCol = this.layoutNumber(r, cols.col, rowNo);
    const plotId = cols.plot >= 0 ? r.text(cols.plot) : '';
    if (cols.plot >= 0 && plotId === '') problems.add(rowNo, this.cellName(cols.plot), '', 'missing-value', 'the plot identifier is empty');

    // Trait and value.
    const trait = cols.trait >= 0 ? this.traitOf(r, rowNo) : this.traitList[0];
    const value = trait === undefined ? null : this.valueOf(r, trait, rowNo);

    if (trial === null || treatment === null || trait === undefined) return;

    const block = cols.block >= 0 ? this.blockOf(trial, r) : null;
    if (block === null && trial.rowWithoutBlock === 0) trial.rowWithoutBlock = rowNo;
    if ((plotRow === null || plotCol === null) && trial.rowWithoutRowCol === 0) trial.rowWithoutRowCol = rowNo;

    // Plot identity: plot id, else row+column, else block+treatment.
    let key: number | string | null = null;
    let keyColumn = -1;
    let slotBlock: BlockState | null = null; // set when the key is the block's plotByTreatment slot
    if (cols.plot >= 0) {
      if (plotId !== '') {
        key = plotId;
        keyColumn = cols.plot;
      }
    } else if (plotRow !== null && plotCol !== null) {
      key = smallPair(plotRow, plotCol) ?? `${plotRow}\u0001${plotCol}`;
      keyColumn = cols.row;
    } else if (block !== null) {
      if (this.blockSlots && treatment.id < DENSE_TREATMENTS) slotBlock = block;
      else key = smallPair(block.id, treatment.id) ?? `${block.label}\u0000${treatment.code}`;
      keyColumn = cols.block;
    }

    let plotIndex: number | undefined;
    if (slotBlock !== null) {
      const slot = slotBlock.plotByTreatment[treatment.id];
      plotIndex = slot === undefined || slot === 0 ? undefined : slot - 1;
    } else plotIndex = key === null || trial.plotIndex === null ? undefined : trial.plotIndex.get(key);
    if (plotIndex !== undefined) {
      const existing = this.sink.plotAt(plotIndex);
      const what = cols.plot >= 0 ? `plot "${plotId}"` : plotRow !== null && plotCol !== null ? `row ${plotRow}, column ${plotCol}` : `block "${block?.label ?? ''}" and treatment "${treatment.code}"`;
      if (cols.trait < 0 || this.wasObserved(plotIndex, trait.index)) {
        // Without a plot column a plot is known by its block and treatment (or row and column), so a
        // treatment replicated within a block (fractional or central-point designs) looks like a repeat.
        const hint = cols.plot < 0 ? '; if the treatment is replicated within the block (a fractional or central-point design), map the plot column (columns.plot) so each plot is told apart' : '';
        problems.add(rowNo, this.cellName(keyColumn), r.text(keyColumn), 'duplicate-plot', `trial "${trial.key}" already has ${what} on row ${existing.sourceRow}${cols.trait >= 0 ? ` for trait "${trait.trait.name}"` : ''}${hint}`);
        return;
      }
      if (existing.treatment !== treatment.code || existing.block !== (block?.label ?? null)) {
        problems.add(rowNo, this.cellName(cols.treatment), treatment.code, 'plot-disagrees', `${what} of trial "${trial.key}" has treatment "${existing.treatment}", block "${existing.block ?? ''}" on row ${existing.sourceRow}`);
        return;
      }
    } else {
      if (cols.trait >= 0 && key === null && slotBlock === null && !this.reportedNoPlotKey) {
        this.reportedNoPlotKey = true;
        problems.add(rowNo, this.cellName(cols.trait), trait.trait.name, 'no-plot-identifier', 'with one row per plot and trait, each row needs a plot column, row and column, or a block to tie its traits to one plot');
      }
      plotIndex = this.sink.addPlot(trial.key, treatment.code, block === null ? null : block.label, plotRow, plotCol, cols.plot >= 0 ? plotId : null, rowNo);
      if (slotBlock !== null) {
        const slots = slotBlock.plotByTreatment;
        while (slots.length < treatment.id) slots.push(0);
        slots[treatment.id] = plotIndex + 1;
      } else if (key !== null) (trial.plotIndex ??= new Map()).set(key, plotIndex);
      const id = treatment.id;
      if (id < DENSE_TREATMENTS) {
        const reps = trial.plotsPerTreatment;
        while (reps.length <= id) reps.push(0);
        reps[id]++;
      } else {
        const more = (trial.morePlotsPerTreatment ??= new Map());
        more.set(id, (more.get(id) ?? 0) + 1);
      }
    }
    if (cols.trait >= 0) this.markObserved(plotIndex, trait.index);
    this.sink.addObservation(plotIndex, trait.trait.name, value);
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

  private traitOf(r: RowCells, rowNo: number): TraitState | undefined {
    const i = this.cols.trait;
    // Compare in place while the list is short; a map once a file names many traits.
    if (this.traitList.length <= 16) {
      for (const t of this.traitList) if (r.equals(i, t.trait.name)) return t;
    } else {
      const found = this.traits.get(r.text(i));
      if (found !== undefined) return found;
    }
    const name = r.text(i);
    if (name === '') this.problems.add(rowNo, this.cellName(i), '', 'missing-value', 'the trait name is empty');
    else if (this.acceptAnyTrait) return this.declareTrait(name, 'as-is');
    else this.problems.add(rowNo, this.cellName(i), name, 'unknown-trait', `trait "${name}" is not listed under "traits" in the mapping (listed: ${this.traitList.map((t) => t.trait.name).join(', ')})`);
    return undefined;
  }

  /** The block of this row within its trial, with one shared label string per block; null when empty. */
  private blockOf(trial: TrialState, r: RowCells): BlockState | null {
    const i = this.cols.block;
    if (r.isEmpty(i)) return null;
    trial.hasBlock = true;
    const last = trial.lastBlock;
    if (last !== null && r.equals(i, last.label)) return last;
    let b: BlockState | undefined;
    if (trial.blocks.size <= 16) {
      for (const candidate of trial.blocks.values()) {
        if (r.equals(i, candidate.label)) {
          b = candidate;
          break;
        }
      }
    } else b = trial.blocks.get(r.text(i));
    if (b === undefined) {
      const label = r.text(i);
      b = { label, id: trial.blocks.size, plotByTreatment: [] };
      trial.blocks.set(label, b);
    }
    trial.lastBlock = b;
    return b;
  }

  private trialOf(r: RowCells, rowNo: number): TrialState | null {
    const cols = this.cols;
    let trial: TrialState | null | undefined;
    if (cols.trial >= 0) {
      const last = this.lastTrial;
      if (last !== null && r.equals(cols.trial, last.key)) trial = last;
      else {
        const key = r.text(cols.trial);
        if (key === '') {
          this.problems.add(rowNo, this.cellName(cols.trial), '', 'missing-value', 'the trial is empty');
          return null;
        }
        trial = this.trials.get(key);
        if (trial === undefined) trial = this.newTrial(key, r.text(cols.site), r.text(cols.year), rowNo);
      }
      if (trial !== null) {
        if (cols.site >= 0 && !r.equals(cols.site, trial.siteRaw)) {
          this.problems.add(rowNo, this.cellName(cols.site), r.text(cols.site), 'trial-disagrees', `trial "${trial.key}" has site "${trial.siteRaw}" on row ${trial.firstRow}`);
        }
        if (cols.year >= 0 && !r.equals(cols.year, trial.yearRaw) && parseYear(r.text(cols.year), this.mode) !== trial.year) {
          this.problems.add(rowNo, this.cellName(cols.year), r.text(cols.year), 'trial-disagrees', `trial "${trial.key}" has year "${trial.yearRaw}" on row ${trial.firstRow}`);
        }
      }
    } else {
      if (this.lastTrial !== null && r.equals(cols.site, this.lastSiteRaw) && r.equals(cols.year, this.lastYearRaw)) trial = this.lastTrial;
      else {
        const siteRaw = r.text(cols.site);
        const yearRaw = r.text(cols.year);
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
    if (cols.design >= 0) this.checkDesignCell(trial, r, rowNo);
    if (cols.covariates.length > 0) this.checkCovariates(trial, r, rowNo);
    return trial;
  }

  /** A new trial; its site is the site cell, or the trial key when the file has no site. */
  private newTrial(key: string, siteRaw: string, yearRaw: string, rowNo: number): TrialState | null {
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
      siteRaw,
      site: siteRaw === '' ? key : siteRaw,
      yearRaw,
      year,
      designRaw: '',
      design: this.mappingDesign,
      hasBlock: false,
      rowWithoutBlock: 0,
      rowWithoutRowCol: 0,
      plotIndex: null,
      blocks: new Map(),
      lastBlock: null,
      plotsPerTreatment: [],
      morePlotsPerTreatment: null,
      applied: null,
      covariates: this.cols.covariates.map(() => null),
      covariateRows: this.cols.covariates.map(() => 0),
    };
    this.trials.set(key, trial);
    return trial;
  }

  private checkDesignCell(trial: TrialState, r: RowCells, rowNo: number): void {
    const i = this.cols.design;
    if (r.isEmpty(i) || (trial.designRaw !== '' && r.equals(i, trial.designRaw))) return;
    const text = r.text(i);
    const column = this.cellName(i);
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

  private checkCovariates(trial: TrialState, r: RowCells, rowNo: number): void {
    const covs = this.cols.covariates;
    for (let k = 0; k < covs.length; k++) {
      const i = covs[k].index;
      if (r.isEmpty(i)) continue; // a covariate may be given on one row of the trial only
      const seen = trial.covariates[k];
      if (seen !== null && r.equals(i, seen)) continue;
      const text = r.text(i);
      if (seen === null) {
        const wrong = covariateCellProblem(text, this.mode);
        if (wrong !== null) {
          this.problems.add(rowNo, covs[k].column, text, wrong.rule, `trial covariate ${covs[k].column}: ${wrong.message}`);
          continue;
        }
        trial.covariates[k] = text;
        trial.covariateRows[k] = rowNo;
        if (this.covariateNumeric[k] && Number.isNaN(parseDecimal(text, this.mode))) this.covariateNumeric[k] = false;
      } else {
        const a = parseDecimal(seen, this.mode);
        if (Number.isNaN(a) || a !== parseDecimal(text, this.mode)) {
          this.problems.add(rowNo, covs[k].column, text, 'covariate-not-constant', `trial "${trial.key}" has ${covs[k].column} "${seen}" on row ${trial.covariateRows[k]}; a trial covariate must be the same on every row of the trial`);
        }
      }
    }
  }

  /** The row's treatment, found by comparing cells in place while the list is short. */
  private findTreatment(r: RowCells): TreatmentState | undefined {
    const i = this.cols.treatment;
    const last = this.lastTreatment;
    if (last !== null && r.equals(i, last.code)) return last;
    const list = this.treatmentList;
    if (list.length <= 64) {
      for (let k = 0; k < list.length; k++) if (r.equals(i, list[k].code)) return list[k];
      return undefined;
    }
    return this.treatments.get(r.text(i));
  }

  private treatmentOf(r: RowCells, rowNo: number, trial: TrialState | null): TreatmentState | null {
    const i = this.cols.treatment;
    const column = this.cellName(i);
    let t = this.findTreatment(r);
    const factors = this.cols.factors;
    if (t === undefined) {
      const code = r.text(i);
      if (code === '') {
        this.problems.add(rowNo, column, '', 'unknown-treatment', 'the treatment code is empty');
        return null;
      }
      if (this.allowedTreatments !== null && !this.allowedTreatments.has(code)) {
        this.problems.add(rowNo, column, code, 'unknown-treatment', `treatment "${code}" is not among the treatments the mapping lists`);
        return null;
      }
      t = { code, id: this.treatmentList.length, firstRow: rowNo, raw: factors.map((fc) => r.text(fc.index)) };
      this.treatments.set(code, t);
      this.treatmentList.push(t);
    } else {
      let differs = false;
      for (let k = 0; k < factors.length; k++) {
        const fi = factors[k].index;
        const first = t.raw[k];
        if (r.equals(fi, first)) continue;
        const a = r.number(fi, this.mode);
        if (!Number.isNaN(a) && a === parseDecimal(first, this.mode)) continue;
        if (this.sameControlLevel(t.code, factors[k].name, first, r.text(fi))) continue;
        // A numeric level that differs between trials is the amount applied at that site (a
        // treatment coded by level number): kept per trial. Anything else is a disagreement.
        if (trial !== null && !Number.isNaN(a) && !Number.isNaN(parseDecimal(first, this.mode))) {
          differs = true;
          continue;
        }
        this.problems.add(rowNo, factors[k].column, r.text(fi), 'treatment-levels-disagree', `treatment "${t.code}" has ${factors[k].name} "${first}" on row ${t.firstRow}`);
      }
      if (trial !== null) this.checkApplied(r, rowNo, trial, t, differs);
    }
    this.lastTreatment = t;
    return t;
  }

  /** Within one trial a treatment has one applied level: the first row of the trial sets it. */
  private checkApplied(r: RowCells, rowNo: number, trial: TrialState, t: TreatmentState, differs: boolean): void {
    const factors = this.cols.factors;
    const own = trial.applied?.get(t.code);
    // Most rows repeat their treatment's levels: no cell text is made for them.
    if (own === undefined && !differs) return;
    const cells = factors.map((fc) => r.text(fc.index));
    const seenHere = (t.id < DENSE_TREATMENTS ? trial.plotsPerTreatment[t.id] : trial.morePlotsPerTreatment?.get(t.id)) ?? 0;
    if (own === undefined) {
      if (seenHere > 0) {
        this.problems.add(rowNo, factors[0]?.column ?? null, cells.join(' '), 'treatment-levels-disagree', `treatment "${t.code}" has other levels (${t.raw.join(' ')}) earlier in trial "${trial.key}": within a trial a treatment has one level`);
        return;
      }
      (trial.applied ??= new Map()).set(t.code, cells);
      if (this.firstAppliedRow === 0) this.firstAppliedRow = rowNo;
      return;
    }
    for (let k = 0; k < factors.length; k++) {
      const a = parseDecimal(cells[k], this.mode);
      const b = parseDecimal(own[k], this.mode);
      // Only amounts: a categorical level that differs was reported by treatmentOf already.
      if (cells[k] === own[k] || Number.isNaN(a) || Number.isNaN(b) || a === b) continue;
      this.problems.add(rowNo, factors[k].column, cells[k], 'treatment-levels-disagree', `treatment "${t.code}" has ${factors[k].name} "${own[k]}" earlier in trial "${trial.key}": within a trial a treatment has one level`);
    }
  }

  /** Each trial's applied levels in canonical units, only the numeric factors that differ. */
  private attachApplied(trials: ParsedTrial[], factors: readonly { readonly name: string; readonly kind: string }[], scales: readonly number[]): void {
    trials.forEach((p, i) => {
      const applied = this.trials.get(p.key)?.applied;
      if (!applied) return;
      const out: Record<string, Record<string, number>> = {};
      for (const [code, cells] of applied) {
        const first = this.treatments.get(code)?.raw ?? [];
        const levels: Record<string, number> = {};
        cells.forEach((cell, k) => {
          const v = parseDecimal(cell, this.mode);
          if (factors[k].kind === 'numeric' && !Number.isNaN(v) && v !== parseDecimal(first[k], this.mode)) levels[factors[k].name] = v * scales[k];
        });
        if (Object.keys(levels).length > 0) out[code] = levels;
      }
      trials[i] = { ...p, appliedLevels: out };
    });
  }

  /** A blank and the control's stated level (0 unless the mapping says otherwise) are the same level of the control. */
  private sameControlLevel(code: string, factor: string, a: string, b: string): boolean {
    if (code !== this.mapping.control || (a !== '' && b !== '')) return false;
    const written = parseDecimal(a === '' ? b : a, this.mode);
    return !Number.isNaN(written) && written === controlLevel(factor, this.mapping.controlLevels);
  }

  private layoutNumber(r: RowCells, index: number, rowNo: number): number | null {
    if (index < 0 || r.isEmpty(index)) return null;
    const v = r.number(index, this.mode);
    if (!Number.isInteger(v)) {
      this.problems.add(rowNo, this.cellName(index), r.text(index), Number.isNaN(v) ? 'not-a-number' : 'not-an-integer', 'a row or column position must be a whole number');
      return null;
    }
    return v;
  }

  private valueOf(r: RowCells, trait: TraitState, rowNo: number): number | null {
    const i = this.cols.response;
    // Parse first: a missing cell (empty, blank, NA) never parses, so most rows scan the cell once.
    const raw = r.number(i, this.mode);
    if (Number.isNaN(raw) && r.isMissing(i)) return null;
    const column = this.cellName(i);
    if (Number.isNaN(raw)) {
      const text = r.text(i);
      this.problems.add(rowNo, column, text, 'not-a-number', `not a number: ${NUMBER_HINT[this.mode]}${this.mode === 'point' && DECIMAL_COMMA.test(text) ? DECIMAL_COMMA_HINT : ''}; an empty cell, NA, n/a, "." or "-" marks a missing value`);
      return null;
    }
    if (!Number.isFinite(raw)) {
      this.problems.add(rowNo, column, r.text(i), 'not-a-number', 'the number is too large');
      return null;
    }
    const v = trait.factor === 1 ? raw : raw * trait.factor;
    const t = trait.trait;
    if ((t.lower !== null && v < t.lower) || (t.upper !== null && v > t.upper)) {
      const range = `${t.lower ?? '-inf'} to ${t.upper ?? 'inf'} ${t.unit}`;
      this.problems.add(rowNo, column, r.text(i), 'out-of-bounds', `trait "${t.name}" must lie within ${range}${trait.factor !== 1 ? ` (value converted from ${trait.fileUnit}: ${v})` : ''}`);
      return null;
    }
    if (t.kind === 'count' && !Number.isInteger(v)) {
      this.problems.add(rowNo, column, r.text(i), 'not-a-count', `trait "${t.name}" is a count: a whole number is expected`);
      return null;
    }
    return v;
  }

  /** Whole-file checks (throws IntakeError listing every problem) and all but the plots, which are in the sink; call after the last row. */
  finish(): PlotTableSummary {
    const problems = this.problems;
    const cols = this.cols;
    const treatmentColumn = this.cellName(cols.treatment);
    if (this.rowsRead === 0) problems.add(0, null, null, 'empty-file', 'the file has a header but no data rows');
    const control = this.mapping.control ?? null;
    if (control !== null && this.rowsRead > 0 && !this.treatments.has(control)) {
      const codes = this.treatmentList.map((t) => t.code);
      problems.add(0, treatmentColumn, control, 'unknown-treatment', `the control "${control}" named in the ${this.mapping.columns.estimate === undefined && this.mapping.trait?.unit === 'as-is' ? 'spec' : 'mapping'} never appears in the treatment column; the codes there are ${listNames(codes)}${didYouMean(control, codes)}`);
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
      let any = false;
      for (const count of t.plotsPerTreatment) {
        if (count > 0) any = true;
        if (count > 1) replicated = true;
      }
      if (t.morePlotsPerTreatment !== null) {
        for (const count of t.morePlotsPerTreatment.values()) {
          if (count > 0) any = true;
          if (count > 1) replicated = true;
        }
      }
      if (!replicated && any) {
        problems.add(t.firstRow, treatmentColumn, t.key, 'single-replicate', `trial "${t.key}" has every treatment only once: with a single replicate there is no error term`);
      }
      trials.push({ key: t.key, site: t.site, year: t.year, design });
    }
    problems.throwIfAny();
    const { factors, treatments, scales } = factorsAndTreatments(this.treatmentList, cols.factors, this.mapping.factorUnits, this.mode, { control, controlLevels: this.mapping.controlLevels });
    if (this.firstAppliedRow > 0) this.attachApplied(trials, factors, scales);
    return {
      rowsRead: this.rowsRead,
      protocol: this.mapping.protocol ?? 'default',
      control,
      traits: this.traitList.map((t) => t.trait),
      factors,
      treatments,
      trials,
      trialCovariates: covariateTable(this.trials.values(), cols.covariates, this.covariateNumeric, this.mode),
      mapping: this.mapping,
    };
  }
}
