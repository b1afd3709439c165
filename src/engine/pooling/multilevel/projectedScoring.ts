// The local maximiser of projectedNewton.ts with the analytic gradient and an information matrix
// (the average information) in place of finite differences: the same projection (components at
// zero held there while their slope points below zero), the same settling rule (free slopes nil on
// the scale of the curvature) and the same halving line search that only accepts a rise, so it
// settles at the same maximum. Each iteration costs one score evaluation at the accepted point.
import { newtonStep, type LocalMaximum } from './projectedNewton.js';

export interface ScoreAt {
  value: number;
  gradient: readonly number[];
  /** Minus the (approximate) Hessian, row-major dims x dims. */
  information: readonly number[];
}

export function projectedScoring(score: (x: readonly number[]) => ScoreAt, start: readonly number[], scale: number, maxIterations = 60): LocalMaximum | null {
  const dims = start.length;
  let x = start.map((v) => Math.max(0, v));
  let at = score(x);
  if (!Number.isFinite(at.value)) return null;
  for (let iteration = 0; iteration < maxIterations; iteration++) {
    const g = at.gradient;
    const info = at.information;
    const idx: number[] = [];
    for (let k = 0; k < dims; k++) if (!(x[k] === 0 && g[k] <= 0)) idx.push(k);
    if (idx.length === 0) return { x, value: at.value };
    if (idx.every((k) => Math.abs(g[k]) * Math.sqrt(1 / Math.max(1e-300, info[k * dims + k])) < 1e-6)) return { x, value: at.value };
    // newtonStep solves (-H) d = g: pass H = -information
    const step = newtonStep(idx.map((a) => idx.map((b) => -info[a * dims + b])), idx.map((k) => g[k]));
    const d = new Array<number>(dims).fill(0);
    idx.forEach((k, i) => (d[k] = step ? step[i] : g[k] / Math.max(1e-300, Math.abs(info[k * dims + k]))));
    let accepted = false;
    for (let alpha = 1; alpha > 1e-10; alpha /= 2) {
      const y = x.map((v, k) => Math.max(0, v + alpha * d[k]));
      const next = score(y);
      if (next.value > at.value) {
        const moved = y.reduce((s, v, k) => s + Math.abs(v - x[k]), 0);
        x = y;
        at = next;
        accepted = true;
        if (moved <= 1e-10 * scale) return { x, value: at.value };
        break;
      }
    }
    if (!accepted) return { x, value: at.value };
  }
  return null;
}
