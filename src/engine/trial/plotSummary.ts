// What the summary of a trial keeps of its per-plot diagnostics: the largest |studentised
// residual|, the largest Cook's distance and how many plots pass the influential screen. Taken
// straight from the diagnostic columns when the analysis is summarised as it goes (detail
// 'summary'), so thousands of trials make no per-plot objects and no messages for the
// influential-plot flags the summary only counts. The same numbers as reading the listed plots:
// each value passes num() (null when not finite) as the listed plot's field does.
import { num } from '../jsonSafe.js';
import type { Num } from './types.js';

export interface PlotSummary {
  readonly maxAbsStudentized: Num;
  readonly maxCooksDistance: Num;
  /** Plots with Cook's distance above the threshold (the influential-plot flags a full analysis lists). */
  readonly influentialPlots: number;
}

export function summarisePlotColumns(studentized: ArrayLike<number>, cooks: ArrayLike<number>, cooksThreshold: number): PlotSummary {
  let maxAbsStudentized: number | null = null;
  let maxCooksDistance: number | null = null;
  let influentialPlots = 0;
  for (let i = 0; i < studentized.length; i++) {
    const s = num(studentized[i]);
    if (s !== null && (maxAbsStudentized === null || Math.abs(s) > maxAbsStudentized)) maxAbsStudentized = Math.abs(s);
    const c = num(cooks[i]);
    if (c !== null && (maxCooksDistance === null || c > maxCooksDistance)) maxCooksDistance = c;
    if (c !== null && c > cooksThreshold) influentialPlots++;
  }
  return { maxAbsStudentized, maxCooksDistance, influentialPlots };
}
