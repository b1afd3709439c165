// Which variance parameters act on one trial's block, and on which columns of B.
import type { ModelFrame } from './remlCriterion.js';
import { f64 } from './arena.js';

export interface ActiveParameter {
  readonly index: number;
  /** Columns Z_k of B for a random term; null for the residual (V_k = I). */
  readonly columns: Int32Array | null;
}

export function activeParameters(frame: ModelFrame, trial: number): ActiveParameter[] {
  const t = frame.stats.trials[trial];
  const out: ActiveParameter[] = [];
  frame.layout.termParameter.forEach((k, term) => {
    if (k < 0) return;
    const cols: number[] = [];
    for (let j = 0; j < t.termOfColumn.length; j++) if (t.termOfColumn[j] === term) cols.push(j);
    if (cols.length > 0) out.push({ index: k, columns: Int32Array.from(cols) });
  });
  out.push({ index: frame.layout.residualParameter[trial], columns: null });
  return out;
}

/** All trials' active parameters, computed once per fit and shared within a design pattern. */
export function activeParameterTable(frame: ModelFrame): ActiveParameter[][] {
  const byPattern = frame.patternTrial.map((i) => activeParameters(frame, i));
  return frame.stats.trials.map((_, i) => byPattern[frame.patternOf[i]]);
}

/** Local copy C[tg, tg] of the global p x p matrix C for this trial's treatments. */
export function localBlock(c: Float64Array, p: number, tg: Int32Array): Float64Array {
  const t = tg.length;
  const out = f64(t * t);
  for (let a = 0; a < t; a++) for (let b = 0; b < t; b++) out[a * t + b] = c[tg[a] * p + tg[b]];
  return out;
}
