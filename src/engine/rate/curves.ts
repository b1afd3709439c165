// The five response curves as functions of rate alone (block offsets averaged out: the
// intercept is the mean over blocks), their slopes, and the closed-form economic optimum.
//
//   linear             f = a + b x
//   quadratic          f = a + b x + c x^2                      (c < 0: diminishing returns)
//   linear-plateau     f = a + b min(x, x0)                     plateau = a + b x0
//   quadratic-plateau  f = a + b m - b m^2 / (2 x0), m=min(x,x0) (so c = -b / (2 x0), smooth join)
//   exponential        f = a + b (1 - exp(-c x)), c > 0          asymptote = a + b
//
// Net return in yield units at price ratio r: N(x) = f(x) - f(0) - r x. The optimum solves
// f'(x) = r:
//   quadratic          x* = (r - b) / (2 c)        (a maximum only when c < 0)
//   linear-plateau     x* = x0 when b > r, otherwise no input pays
//   quadratic-plateau  x* = (r - b) / (2 c) = x0 (1 - r / b), for b > 0
//   exponential        x* = log(b c / r) / c, for b c > 0
import type { RateModel, OptimumFlag } from './types.js';

export interface Curve {
  readonly model: RateModel;
  /** Named parameters as in the table above: intercept, slope/linear, quadratic, join, rise, curvature. */
  readonly params: Readonly<Record<string, number>>;
}

export function curveValue(c: Curve, x: number): number {
  const p = c.params;
  switch (c.model) {
    case 'linear':
      return p.intercept + p.slope * x;
    case 'quadratic':
      return p.intercept + p.linear * x + p.quadratic * x * x;
    case 'linear-plateau':
      return p.intercept + p.slope * Math.min(x, p.join);
    case 'quadratic-plateau': {
      const m = Math.min(x, p.join);
      return p.intercept + p.linear * m - (p.linear * m * m) / (2 * p.join);
    }
    case 'exponential':
      return p.intercept + p.rise * -Math.expm1(-p.curvature * x);
  }
}

/** Right-hand slope f'(x+) (the plateau models have a kink or a C1 join at x0). */
export function curveSlope(c: Curve, x: number): number {
  const p = c.params;
  switch (c.model) {
    case 'linear':
      return p.slope;
    case 'quadratic':
      return p.linear + 2 * p.quadratic * x;
    case 'linear-plateau':
      return x < p.join ? p.slope : 0;
    case 'quadratic-plateau':
      return x < p.join ? p.linear * (1 - x / p.join) : 0;
    case 'exponential':
      return p.rise * p.curvature * Math.exp(-p.curvature * x);
  }
}

export function yieldGain(c: Curve, x: number): number {
  return curveValue(c, x) - curveValue(c, 0);
}

export function netReturn(c: Curve, x: number, priceRatio: number): number {
  return yieldGain(c, x) - priceRatio * x;
}

/**
 * The rate where the curve's slope equals the price ratio, ignoring the tested range.
 * +Infinity / -Infinity: net return rises / falls without end (linear curves, a falling
 * response); NaN: the curve is convex, so the best rate is at one end of the range.
 */
export function unconstrainedOptimum(c: Curve, r: number): number {
  const p = c.params;
  switch (c.model) {
    case 'linear':
      return p.slope > r ? Infinity : p.slope < r ? -Infinity : 0;
    case 'quadratic':
      if (p.quadratic < 0) return (r - p.linear) / (2 * p.quadratic);
      return NaN;
    case 'linear-plateau':
      return p.slope > r ? p.join : -Infinity;
    case 'quadratic-plateau':
      return p.linear > 0 ? p.join * (1 - r / p.linear) : -Infinity;
    case 'exponential': {
      const bc = p.rise * p.curvature;
      return bc > 0 ? Math.log(bc / r) / p.curvature : -Infinity;
    }
  }
}

export interface CappedOptimum {
  readonly optimum: number;
  readonly unconstrained: number;
  readonly flags: OptimumFlag[];
}

/** The optimum held inside the tested range [lo, hi], with the reason when it was held. */
export function cappedOptimum(c: Curve, r: number, lo: number, hi: number): CappedOptimum {
  const u = unconstrainedOptimum(c, r);
  const flags: OptimumFlag[] = [];
  let x: number;
  if (Number.isNaN(u)) {
    flags.push('convex-curve');
    x = netReturn(c, hi, r) > netReturn(c, lo, r) ? hi : lo;
    if (x === hi && curveSlope(c, hi) > r) flags.push('above-tested-range');
  } else if (u > hi) {
    x = hi;
    flags.push('above-tested-range');
  } else if (u < lo) {
    x = lo;
  } else {
    x = u;
  }
  if (x === lo && !(x === u && u > lo)) {
    if (lo <= 0) flags.push('no-input-pays');
    else if (u < lo || Number.isNaN(u)) flags.push('below-tested-range');
  }
  return { optimum: x, unconstrained: u, flags };
}
