// The pooled optimum, its intervals and the site-optimum summary, each recomputed
// independently: in R (lm fits, optimize on the averaged curves, quantile type 7,
// delta method written out by hand) and by a brute-force grid in this file using its own
// curve formulas. Tolerances stated beside each check.
import { describe, expect, it } from 'vitest';
import { analyzeRateResponse } from '../../../src/engine/rate/analyzeRateResponse.js';
import type { RateResponseResult } from '../../../src/engine/rate/types.js';
import { mulberry32 } from '../../../src/engine/stats/random.js';
import { runR, rVector, relDiff } from '../../support/rscript.js';
import { exponentialCurve, generateRateNetwork, linearPlateauCurve, quadraticCurve, quadraticPlateauCurve, trialCsv } from './generateRateNetwork.js';

const r = 0.006;

/** This file's own curve formulas (not the engine's), from the reported parameters. */
function gain(model: string, p: Record<string, number | null>, x: number): number {
  const v = (k: string) => p[k] as number;
  const f = (z: number): number => {
    switch (model) {
      case 'linear':
        return v('slope') * z;
      case 'quadratic':
        return v('linear') * z + v('quadratic') * z * z;
      case 'linear-plateau':
        return v('slope') * (z < v('join') ? z : v('join'));
      case 'quadratic-plateau': {
        const m = z < v('join') ? z : v('join');
        return v('linear') * m + v('quadratic') * m * m;
      }
      case 'exponential':
        return v('rise') * (1 - Math.exp(-v('curvature') * z));
      default:
        throw new Error(model);
    }
  };
  return f(x) - f(0);
}

function meanNet(res: RateResponseResult, x: number, ratio = r): number {
  const used = res.trials.filter((t) => t.optimum !== null);
  return used.reduce((s, t) => s + gain(t.model as string, t.params, x), 0) / used.length - ratio * x;
}

/** R expression for one trial's gain over rate 0 as a function of x. */
function rGain(model: string, p: Record<string, number | null>): string {
  const v = (k: string) => (p[k] as number).toPrecision(17);
  switch (model) {
    case 'quadratic':
      return `(${v('linear')} * x + ${v('quadratic')} * x^2)`;
    case 'linear-plateau':
      return `(${v('slope')} * pmin(x, ${v('join')}))`;
    case 'quadratic-plateau':
      return `(${v('linear')} * pmin(x, ${v('join')}) + ${v('quadratic')} * pmin(x, ${v('join')})^2)`;
    case 'exponential':
      return `(${v('rise')} * (1 - exp(-${v('curvature')} * x)))`;
    default:
      return `(${v('slope')} * x)`;
  }
}

describe('pooled optimum of quadratic curves', () => {
  const network = generateRateNetwork({
    seed: 777,
    trials: 9,
    curves: [quadraticCurve(6, 0.03, -8e-5), quadraticCurve(5, 0.045, -1.4e-4), quadraticCurve(7, 0.02, -5e-5), quadraticPlateauCurve(5, 0.04, 150)],
    designs: ['randomised-blocks', 'completely-randomised'],
    dropPlots: 1,
    sd: 0.3,
  });
  const seed = 4242;
  const B = 300;
  const res = analyzeRateResponse(network, { factor: 'rate', model: 'quadratic', priceRatio: r, at: { timing: 'early' }, profitableWithin: 0.1, bootstrap: B, seed, confidence: 0.9 });
  const k = network.trials.length;

  it('equals (r - mean b) / (2 mean c) from the trials\' coefficients (1e-9 relative)', () => {
    const mb = res.trials.reduce((s, t) => s + (t.params.linear as number), 0) / k;
    const mc = res.trials.reduce((s, t) => s + (t.params.quadratic as number), 0) / k;
    expect(res.pooled.trialsUsed).toBe(k);
    expect(relDiff(res.pooled.optimum as number, (r - mb) / (2 * mc))).toBeLessThan(1e-9);
  });

  it('agrees with R: lm per trial, optimize on the mean curve, delta-method interval, site-optimum quantiles', () => {
    const files: Record<string, string> = {};
    network.trials.forEach((t, i) => (files[`t${i + 1}.csv`] = trialCsv(network, t, 'early')));
    // Bootstrap replicates recomputed here: draws floor(u k) from mulberry32(seed), k per
    // replicate; each replicate's optimum is the closed form on its mean coefficients.
    const u = mulberry32(seed);
    const reps: number[] = [];
    for (let b = 0; b < B; b++) {
      let sb = 0;
      let sc = 0;
      for (let i = 0; i < k; i++) {
        const t = res.trials[Math.floor(u() * k)];
        sb += t.params.linear as number;
        sc += t.params.quadratic as number;
      }
      const [mb, mc] = [sb / k, sc / k];
      reps.push(mc < 0 ? Math.min(200, Math.max(0, (r - mb) / (2 * mc))) : mb + mc * 200 > r ? 200 : 0);
    }
    files['reps.csv'] = 'x\n' + reps.map((x) => x.toPrecision(17)).join('\n') + '\n';
    const run = runR(
      `
k <- ${k}; r <- ${r}
bc <- t(sapply(1:k, function(i) {
  d <- read.csv(paste0("t", i, ".csv"), colClasses = c("character", "numeric", "numeric")); d$block <- factor(d$block)
  fit <- if (nlevels(d$block) > 1) lm(y ~ block + rate + I(rate^2), data = d) else lm(y ~ rate + I(rate^2), data = d)
  coef(fit)[c("rate", "I(rate^2)")]
}))
m <- colMeans(bc); V <- cov(bc) / k
xs <- (r - m[1]) / (2 * m[2])
g <- c(-1 / (2 * m[2]), -xs / m[2])
se <- sqrt(drop(t(g) %*% V %*% g))
emit("opt", xs); emit("se", se)
emit("lower", xs - qt(0.95, k - 1) * se); emit("upper", xs + qt(0.95, k - 1) * se)
emit("optimize", optimize(function(x) m[1] * x + m[2] * x^2 - r * x, c(0, 200), maximum = TRUE, tol = 1e-12)$maximum)
site <- pmin(200, pmax(0, (r - bc[, 1]) / (2 * bc[, 2])))
emit("siteq", quantile(site, c(0.1, 0.25, 0.5, 0.75, 0.9), type = 7))
reps <- read.csv("reps.csv")$x
emit("bootq", quantile(reps, c(0.05, 0.95), type = 7))
`,
      files,
    );
    // Pooled optimum vs R (1e-8 relative; optimize's own tolerance bounds the second check at 1e-7).
    expect(relDiff(res.pooled.optimum as number, rVector(run, 'opt')[0])).toBeLessThan(1e-8);
    expect(relDiff(res.pooled.optimum as number, rVector(run, 'optimize')[0])).toBeLessThan(1e-7);
    // Delta method (1e-8 relative).
    expect(relDiff(res.pooled.delta?.se as number, rVector(run, 'se')[0])).toBeLessThan(1e-8);
    expect(relDiff(res.pooled.delta?.lower as number, rVector(run, 'lower')[0])).toBeLessThan(1e-8);
    expect(relDiff(res.pooled.delta?.upper as number, rVector(run, 'upper')[0])).toBeLessThan(1e-8);
    // Site optima quantiles (1e-8 relative).
    rVector(run, 'siteq').forEach((q, i) => expect(relDiff(res.siteOptima.quantiles[i].value as number, q)).toBeLessThan(1e-8));
    // Bootstrap percentile limits, the reported interval here (1e-8 relative).
    const [bl, bu] = rVector(run, 'bootq');
    expect(res.pooled.method).toMatch(/bootstrap/);
    expect(relDiff(res.pooled.optimumLower as number, bl)).toBeLessThan(1e-8);
    expect(relDiff(res.pooled.optimumUpper as number, bu)).toBeLessThan(1e-8);
    expect(bu).toBeGreaterThan(bl);
  });

  it('profitable range: mean net return at its ends is the maximum minus 0.1 (1e-9 absolute)', () => {
    const top = meanNet(res, res.pooled.optimum as number);
    expect(relDiff(top, res.pooled.netReturnAtOptimum as number)).toBeLessThan(1e-12);
    for (const end of [res.pooled.profitableLower as number, res.pooled.profitableUpper as number]) {
      if (end === 0 || end === 200) continue;
      expect(Math.abs(meanNet(res, end) - (top - 0.1))).toBeLessThan(1e-9);
    }
    expect(res.pooled.profitableLower as number).toBeLessThan(res.pooled.optimum as number);
    expect(res.pooled.profitableUpper as number).toBeGreaterThan(res.pooled.optimum as number);
  });
});

describe('pooled optimum of mixed curves (best model per trial)', () => {
  const network = generateRateNetwork({
    seed: 31337,
    trials: 8,
    curves: [exponentialCurve(6, 3, 0.012), linearPlateauCurve(5, 0.025, 110), quadraticPlateauCurve(5, 0.04, 150), quadraticCurve(6, 0.03, -8e-5)],
    sd: 0.25,
  });
  const res = analyzeRateResponse(network, { factor: 'rate', model: 'best', priceRatio: r, profitableWithin: 0.05, bootstrap: 0, seed: 1, confidence: 0.95 });

  it('uses several curve shapes', () => {
    expect(new Set(res.trials.map((t) => t.model)).size).toBeGreaterThanOrEqual(2);
  });

  it('equals the maximiser on a brute-force grid of 2,000,001 rates (within 2 grid steps = 2e-4)', () => {
    let bestX = 0;
    let bestN = -Infinity;
    for (let i = 0; i <= 2_000_000; i++) {
      const x = (200 * i) / 2_000_000;
      const n = meanNet(res, x);
      if (n > bestN) [bestX, bestN] = [x, n];
    }
    expect(Math.abs((res.pooled.optimum as number) - bestX)).toBeLessThanOrEqual(2e-4);
    expect(meanNet(res, res.pooled.optimum as number)).toBeGreaterThanOrEqual(bestN - 1e-12);
    expect(relDiff(res.pooled.netReturnAtOptimum as number, meanNet(res, res.pooled.optimum as number))).toBeLessThan(1e-12);
  });

  it("equals R's optimize on the averaged curves (1e-7 relative)", () => {
    const used = res.trials.filter((t) => t.optimum !== null);
    const run = runR(`
f <- function(x) (${used.map((t) => rGain(t.model as string, t.params)).join(' + ')}) / ${used.length} - ${r} * x
emit("opt", optimize(f, c(0, 200), maximum = TRUE, tol = 1e-12)$maximum)
`);
    expect(relDiff(res.pooled.optimum as number, rVector(run, 'opt')[0])).toBeLessThan(1e-7);
  });

  it('sensitivity rows re-maximise the mean curve at each price ratio (grid of 200,001 rates, within 2 steps = 2e-3)', () => {
    for (const row of res.sensitivity) {
      let bestX = 0;
      let bestN = -Infinity;
      for (let i = 0; i <= 200_000; i++) {
        const x = (200 * i) / 200_000;
        const n = meanNet(res, x, row.priceRatio);
        if (n > bestN) [bestX, bestN] = [x, n];
      }
      expect(Math.abs((row.optimum as number) - bestX)).toBeLessThanOrEqual(2e-3);
    }
    const one = res.sensitivity.find((s) => s.multiplier === 1);
    expect(one?.optimum).toBe(res.pooled.optimum);
  });
});
