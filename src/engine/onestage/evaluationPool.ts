// Working memory of REML evaluations. An evaluation fills, per design pattern, the pattern's
// shared block (trialBlock.ts) and its data rows; the optimiser evaluates many candidates and
// keeps few. Allocating that memory afresh for every candidate cost more than the arithmetic on
// networks with one pattern per trial (a per-trial residual), so each frame keeps the buffers of
// discarded evaluations and hands them to the next one. Everything an evaluation writes is
// overwritten before it is read, so reused buffers need no clearing.
import type { TrialStatistics } from './sufficientStatistics.js';
import { patternStateIn, patternStateSize, type PatternState } from './trialBlock.js';
import type { SpectralState } from './spectralEvaluation.js';

export interface EvaluationBuffers {
  readonly patterns: PatternState[];
  /** Per pattern column: design rows of B'V^-1 y (see Evaluation.hzy). */
  readonly hzy: Float64Array;
  /** Per pattern column: quadratic part of y'V^-1 y. */
  readonly hyy: Float64Array;
  /** Per pattern: design rows of B'V^-1 y summed over its trials. */
  readonly hzySum: Float64Array[];
  /** Per spectral group (spectralGroups.ts): its decomposition and trials' projections. */
  readonly spectral: SpectralState[];
}

/** What the pool needs to know about each pattern: its representative trial, random columns and data columns. */
export interface PoolLayout {
  readonly representatives: readonly TrialStatistics[];
  readonly randomColumns: readonly Int32Array[];
  readonly hzyLength: number;
  readonly nColumns: number;
  readonly spectralStates: () => SpectralState[];
}

export class EvaluationPool {
  private readonly spare: EvaluationBuffers[] = [];
  constructor(private readonly layout: PoolLayout) {}

  take(): EvaluationBuffers {
    return this.spare.pop() ?? this.fresh();
  }

  /** Buffers of an evaluation nothing will read again. */
  give(buffers: EvaluationBuffers): void {
    this.spare.push(buffers);
  }

  private fresh(): EvaluationBuffers {
    const { representatives, randomColumns } = this.layout;
    let size = 0;
    for (let q = 0; q < representatives.length; q++) size += patternStateSize(representatives[q], randomColumns[q]) + representatives[q].m - 1;
    // one buffer per evaluation: a single allocation instead of several per pattern
    const slab = new Float64Array(size);
    const patterns: PatternState[] = [];
    const hzySum: Float64Array[] = [];
    let offset = 0;
    for (let q = 0; q < representatives.length; q++) {
      const t = representatives[q];
      patterns.push(patternStateIn(t, randomColumns[q], slab, offset));
      offset += patternStateSize(t, randomColumns[q]);
      hzySum.push(new Float64Array(slab.buffer, offset * 8, t.m - 1));
      offset += t.m - 1;
    }
    return { patterns, hzy: new Float64Array(this.layout.hzyLength), hyy: new Float64Array(this.layout.nColumns), hzySum, spectral: this.layout.spectralStates() };
  }
}
