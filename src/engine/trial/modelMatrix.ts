// The design's model matrix: intercept, then the nuisance factors (blocks, or rows then
// columns), then treatments last, each factor coded by indicator columns with its first
// level as reference. Treatments come last so the sequential ANOVA tests them adjusted for
// the layout, and so an aliased column is a treatment only when treatments truly are.
import type { TrialDesign } from '../types.js';
import { zeros, type Matrix } from '../linalg/matrix.js';
import type { ModelTerm } from './types.js';
import type { UsedPlot } from './usablePlots.js';

export interface DesignModel {
  readonly x: Matrix;
  readonly terms: readonly ModelTerm[];
  /** Term index of each column. */
  readonly assign: readonly number[];
  /** Level of each column within its term ('(intercept)' for the first). */
  readonly columnLevels: readonly string[];
  /** Level index of each plot per term (term order; -1 for the intercept). */
  readonly plotLevels: readonly (readonly number[])[];
  /** Index of the treatment term in `terms`. */
  readonly treatmentTerm: number;
}

type Role = ModelTerm['role'];

const naturalOrder = new Intl.Collator('en', { numeric: true }).compare;

function nuisanceFactors(design: TrialDesign): { role: Role; key: (p: UsedPlot) => string }[] {
  switch (design) {
    case 'completely-randomised':
      return [];
    case 'randomised-blocks':
      return [{ role: 'block', key: (p) => String(p.block) }];
    case 'latin-square':
    case 'row-column':
      return [
        { role: 'row', key: (p) => String(p.row) },
        { role: 'col', key: (p) => String(p.col) },
      ];
  }
}

/** `treatmentOrder`: protocol order; only treatments with analysed plots get a level. */
export function buildDesignModel(design: TrialDesign, plots: readonly UsedPlot[], treatmentOrder: readonly string[]): DesignModel {
  const factors = [
    ...nuisanceFactors(design).map((f) => ({ ...f, levels: [...new Set(plots.map(f.key))].sort(naturalOrder) })),
    (() => {
      const present = new Set(plots.map((p) => p.treatment));
      return { role: 'treatment' as Role, key: (p: UsedPlot) => p.treatment, levels: treatmentOrder.filter((c) => present.has(c)) };
    })(),
  ];
  const terms: ModelTerm[] = [{ name: '(intercept)', role: 'intercept', levels: [], columns: 1 }];
  const assign: number[] = [0];
  const columnLevels: string[] = ['(intercept)'];
  const plotLevels: number[][] = [plots.map(() => -1)];
  for (const f of factors) {
    const termIndex = terms.length;
    terms.push({ name: f.role, role: f.role, levels: f.levels, columns: Math.max(f.levels.length - 1, 0) });
    const index = new Map(f.levels.map((l, i) => [l, i]));
    plotLevels.push(plots.map((p) => index.get(f.key(p)) as number));
    for (const level of f.levels.slice(1)) {
      assign.push(termIndex);
      columnLevels.push(level);
    }
  }
  const x = zeros(plots.length, assign.length);
  const p = assign.length;
  for (let i = 0; i < plots.length; i++) {
    x.data[i * p] = 1;
    let offset = 1;
    for (let t = 1; t < terms.length; t++) {
      const level = plotLevels[t][i];
      if (level > 0) x.data[i * p + offset + level - 1] = 1;
      offset += terms[t].columns;
    }
  }
  return { x, terms, assign, columnLevels, plotLevels, treatmentTerm: terms.length - 1 };
}

/**
 * Coefficient vector giving the adjusted mean of treatment level `level`: the intercept plus
 * the average of each nuisance factor's effects (equal weight per level) plus the treatment effect.
 */
export function adjustedMeanVector(model: DesignModel, level: number): Float64Array {
  const l = new Float64Array(model.assign.length);
  l[0] = 1;
  let offset = 1;
  for (let t = 1; t < model.terms.length; t++) {
    const term = model.terms[t];
    if (t === model.treatmentTerm) {
      if (level > 0) l[offset + level - 1] = 1;
    } else {
      for (let j = 0; j < term.columns; j++) l[offset + j] = 1 / term.levels.length;
    }
    offset += term.columns;
  }
  return l;
}
