// The mean of many trials' yield-gain curves as one function of rate, for the pooled optimum.
// Linear and quadratic gains are linear in their coefficients, so their weighted mean is one
// polynomial: the sums of the coefficients stand for every such trial, and evaluating the mean
// costs O(1) for them however many trials there are (the bootstrap re-evaluates it over a grid
// of 2,001 rates, 200 times, at thousands of trials). Plateau and exponential curves are
// evaluated one by one, each once however often it was drawn (weighted by its count).
// `plainMeanCurve` evaluates every curve at every rate: the reference the summed one is tested
// against (they differ by rounding only: the gain b x + c x² against f(x) - f(0)).
import { curveSlope, yieldGain, type Curve } from './curves.js';

export interface MeanCurve {
  /** Mean yield gain over rate 0 at x. */
  gain(x: number): number;
  /** Mean right-hand slope at x. */
  slope(x: number): number;
}

/** Curve by curve, every curve at every x. */
export function plainMeanCurve(curves: readonly Curve[]): MeanCurve {
  return {
    gain(x) {
      let s = 0;
      for (const c of curves) s += yieldGain(c, x);
      return s / curves.length;
    },
    slope(x) {
      let s = 0;
      for (const c of curves) s += curveSlope(c, x);
      return s / curves.length;
    },
  };
}

/**
 * The weighted mean: `weights[i]` copies of curves[i] (every curve once when absent; a
 * bootstrap replicate passes how often each trial was drawn).
 */
export function summedMeanCurve(curves: readonly Curve[], weights?: ArrayLike<number>): MeanCurve {
  let linear = 0;
  let quadratic = 0;
  let total = 0;
  const others: Curve[] = [];
  const otherWeights: number[] = [];
  for (let i = 0; i < curves.length; i++) {
    const w = weights === undefined ? 1 : weights[i];
    if (w === 0) continue;
    total += w;
    const c = curves[i];
    const p = c.params;
    if (c.model === 'linear') linear += w * p.slope;
    else if (c.model === 'quadratic') {
      linear += w * p.linear;
      quadratic += w * p.quadratic;
    } else {
      others.push(c);
      otherWeights.push(w);
    }
  }
  return {
    gain(x) {
      let s = linear * x + quadratic * x * x;
      for (let j = 0; j < others.length; j++) s += otherWeights[j] * yieldGain(others[j], x);
      return s / total;
    },
    slope(x) {
      let s = linear + 2 * quadratic * x;
      for (let j = 0; j < others.length; j++) s += otherWeights[j] * curveSlope(others[j], x);
      return s / total;
    },
  };
}
