// Transformations of the response before the analysis, and their inverses for reporting
// means on the original scale.
//
// Rules (stated in the result's transform note):
// - log: natural log of (y + offset). The offset is options.logOffset when given; otherwise 0
//   when every value is positive, and half the smallest positive value of the trial when
//   zeros occur (a common practice with no single source; flagged). Negative values are an error.
// - logit: for percentages on 0–100. When 0 % or 100 % occur the proportions are compressed
//   as p' = (p (n - 1) + 1/2) / n, n = number of plots analysed (Smithson & Verkuilen 2006,
//   Psychological Methods 11:54–71); the inverse undoes it.
// - arcsine-sqrt: asin(sqrt(p / 100)) in radians, percentages on 0–100.
// - sqrt: square root of counts (>= 0).
import type { TransformKind, TransformRecord, TrialFlag } from './types.js';
import { TrialInputError } from './errors.js';

export interface ResponseTransform {
  readonly forward: (y: number) => number;
  /** Back to the original scale; clamps to the range the transform can produce. */
  readonly back: (x: number) => number;
  readonly record: TransformRecord;
  readonly flags: readonly TrialFlag[];
}

export function makeTransform(kind: TransformKind, values: readonly number[], trial: string, logOffset?: number): ResponseTransform {
  switch (kind) {
    case 'none':
      return { forward: (y) => y, back: (x) => x, record: record(kind, null, null, 'no transformation'), flags: [] };
    case 'log':
      return logTransform(values, trial, logOffset);
    case 'logit':
      return logitTransform(values, trial);
    case 'arcsine-sqrt':
      requirePercent(values, trial, kind);
      return {
        forward: (y) => Math.asin(Math.sqrt(y / 100)),
        back: (x) => 100 * Math.sin(clamp(x, 0, Math.PI / 2)) ** 2,
        record: record(kind, null, null, 'asin(sqrt(percent / 100)) in radians; means back-transformed as 100 sin^2'),
        flags: [],
      };
    case 'sqrt': {
      const bad = values.find((v) => v < 0);
      if (bad !== undefined) throw new TrialInputError(trial, `square-root transform needs values >= 0; found ${bad}`);
      return {
        forward: (y) => Math.sqrt(y),
        back: (x) => Math.max(x, 0) ** 2,
        record: record(kind, null, null, 'square root; means back-transformed by squaring (a negative lower limit is set to 0)'),
        flags: [],
      };
    }
  }
}

function record(kind: TransformKind, logOffset: number | null, n: number | null, note: string): TransformRecord {
  return { kind, logOffset, percentCompressionN: n, note };
}

function clamp(x: number, lo: number, hi: number): number {
  return Math.min(Math.max(x, lo), hi);
}

function logTransform(values: readonly number[], trial: string, given?: number): ResponseTransform {
  const negative = values.find((v) => v < 0);
  if (negative !== undefined) throw new TrialInputError(trial, `log transform needs values >= 0; found ${negative}`);
  let offset: number;
  const flags: TrialFlag[] = [];
  let note: string;
  if (given !== undefined) {
    offset = given;
    const bad = values.find((v) => !(v + offset > 0));
    if (bad !== undefined) throw new TrialInputError(trial, `log transform: value ${bad} + offset ${offset} is not positive`);
    note = `natural log of (value + ${offset}), offset set by the analysis`;
  } else if (values.every((v) => v > 0)) {
    offset = 0;
    note = 'natural log; no offset needed (all values positive)';
  } else {
    const positive = values.filter((v) => v > 0);
    if (positive.length === 0) throw new TrialInputError(trial, 'log transform: every value is zero');
    offset = Math.min(...positive) / 2;
    note = `natural log of (value + ${offset}): zeros occur, so half the smallest positive value was added`;
    flags.push({ code: 'log-offset-applied', message: `Zeros occur, so ${offset} (half the smallest positive value) was added before taking logs. Ratios are then ratios of (value + offset).` });
  }
  return { forward: (y) => Math.log(y + offset), back: (x) => Math.exp(x) - offset, record: record('log', offset, null, note), flags };
}

function requirePercent(values: readonly number[], trial: string, kind: string): void {
  const bad = values.find((v) => v < 0 || v > 100);
  if (bad !== undefined) throw new TrialInputError(trial, `${kind} transform is for percentages on 0–100; found ${bad}`);
}

function logitTransform(values: readonly number[], trial: string): ResponseTransform {
  requirePercent(values, trial, 'logit');
  const atBoundary = values.some((v) => v === 0 || v === 100);
  const logit = (p: number): number => Math.log(p / (1 - p));
  const expit = (x: number): number => 1 / (1 + Math.exp(-x));
  if (!atBoundary)
    return {
      forward: (y) => logit(y / 100),
      back: (x) => 100 * expit(x),
      record: record('logit', null, null, 'logit of percent / 100; means back-transformed as 100 / (1 + exp(-x))'),
      flags: [],
    };
  const n = values.length;
  if (n < 2) throw new TrialInputError(trial, 'logit transform at 0 % or 100 % needs at least two plots');
  const squeeze = (p: number): number => (p * (n - 1) + 0.5) / n;
  const unsqueeze = (q: number): number => clamp((q * n - 0.5) / (n - 1), 0, 1);
  return {
    forward: (y) => logit(squeeze(y / 100)),
    back: (x) => 100 * unsqueeze(expit(x)),
    record: record('logit', null, n, `0 % or 100 % occur: proportions compressed as (p (n - 1) + 0.5) / n with n = ${n} before the logit (Smithson & Verkuilen 2006), undone on back-transformation`),
    flags: [{ code: 'percent-boundary-adjusted', message: `Some plots are at 0 % or 100 %, where the logit is infinite; all proportions were pulled slightly toward 50 % (n = ${n}) before the logit.` }],
  };
}
