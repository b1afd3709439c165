// The mixed quadratic rate response against lme4 (R package lme4, lmer with REML = TRUE) on
// random-coefficient rate trials generated here with fixed seeds:
//   lmer(y ~ x + I(x^2) + (x + I(x^2) | trial) + (1 | trial:block), REML = TRUE), x = rate / max rate.
// lme4 runs bobyqa with a tight end radius so both sides reach the optimum. Tolerances:
//   REML logLik 1e-5 relative (and lme4's own deviance function at our parameters must not
//   beat our optimum by more than 1e-6), fixed effects and their standard errors 1e-4 relative,
//   G elements, block variance and residual variance 1e-3 relative; trial-specific
//   coefficients (lme4's coef(): fixed effects plus predicted deviations) and the trial
//   optima (r - b) / (2 c) held to 0..200, 1e-4 relative.
import { describe, expect, it } from 'vitest';
import { analyzeMixedQuadratic } from '../../../../src/engine/rate/mixed/analyzeMixedQuadratic.js';
import { fitMixedQuadratic } from '../../../../src/engine/rate/mixed/fitMixedQuadratic.js';
import { mixedQuadraticData } from '../../../../src/engine/rate/mixed/mixedData.js';
import { treatmentRates } from '../../../../src/engine/rate/rateData.js';
import { mulberry32, normalSampler } from '../../../../src/engine/stats/random.js';
import type { NetworkInput, TrialDesign } from '../../../../src/engine/types.js';
import { relDiff, runR, rVector } from '../../../support/rscript.js';
import { generateRateNetwork, quadraticCurve, trialCsv } from '../generateRateNetwork.js';

const LOGLIK_TOL = 1e-5;
const FIXED_TOL = 1e-4;
const VAR_TOL = 1e-3;

/** `spread` scales the true between-trial sds of (intercept, slope, curvature). */
function randomCoefficientNetwork(seed: number, trials: number, dropPlots: number, designs?: TrialDesign[], spread: readonly number[] = [1, 1, 1]): NetworkInput {
  const z = normalSampler(mulberry32(seed));
  const curves = Array.from({ length: trials }, () => quadraticCurve(6 + 0.7 * spread[0] * z(), 0.03 + 0.007 * spread[1] * z(), -0.00008 + 0.00002 * spread[2] * z()));
  return generateRateNetwork({ seed: seed + 1, trials, curves, sd: 0.3, dropPlots, designs });
}

/** lme4's theta order for a 3 x 3 term: column-major lower triangle, non-negative diagonal. */
function lme4Theta(theta: Float64Array): { trial: number[]; grouping: number[] } {
  const L = [
    [theta[0], 0, 0],
    [theta[1], theta[2], 0],
    [theta[3], theta[4], theta[5]],
  ];
  for (let j = 0; j < 3; j++) if (L[j][j] < 0) for (let i = j; i < 3; i++) L[i][j] = -L[i][j];
  return { trial: [L[0][0], L[1][0], L[2][0], L[1][1], L[2][1], L[2][2]], grouping: Array.from(theta.slice(6), Math.abs) };
}

// Plain networks of randomised-blocks trials use (1 | trial:block). Networks mixing in
// row-column trials switch each trial's blocking terms on with 0/1 indicators, so a term
// contributes nothing in trials of the other design: the same model the engine fits.
const PLAIN = {
  random: '(1 | trial:block)',
  grouping: ['block'],
};
const MIXED_DESIGNS = {
  random: '(0 + isB | trial:block) + (0 + isRC | trial:row) + (0 + isRC | trial:col)',
  grouping: ['block', 'row', 'col'],
};
type Terms = typeof PLAIN;

const rScript = (terms: Terms, trialTheta: number[], groupingTheta: number[]) => `
suppressPackageStartupMessages(library(lme4))
d <- read.csv("d.csv", colClasses = c(rep("character", 4), rep("numeric", 4)))
S <- max(d$rate); d$x <- d$rate / S
fit <- lmer(y ~ x + I(x^2) + (x + I(x^2) | trial) + ${terms.random}, data = d, REML = TRUE,
  control = lmerControl(optimizer = "bobyqa", optCtrl = list(rhoend = 1e-11, maxfun = 1e5), check.conv.singular = "ignore"))
back <- c(1, 1 / S, 1 / S^2)
emit("fixed", fixef(fit) * back)
emit("se", sqrt(diag(as.matrix(vcov(fit)))) * back)
G <- as.matrix(VarCorr(fit)$trial)
emit("G", as.vector(diag(back) %*% G %*% diag(back)))
${terms.grouping.map((g) => `emit("var_${g}", as.numeric(VarCorr(fit)[["trial:${g}"]]))`).join('\n')}
emit("sigma2", sigma(fit)^2)
emit("logLik", as.numeric(logLik(fit)))
emit("deviance", as.numeric(REMLcrit(fit)))
emit("singular", isSingular(fit, tol = 1e-4))
b <- fixef(fit) * back
V <- diag(back) %*% as.matrix(vcov(fit)) %*% diag(back)
xs <- (0.006 - b[[2]]) / (2 * b[[3]])
gr <- c(0, -1 / (2 * b[[3]]), -xs / b[[3]])
emit("optimum", xs)
emit("optimumSe", sqrt(drop(t(gr) %*% V %*% gr)))
cf <- as.matrix(coef(fit)$trial)
cf <- cf[, c("(Intercept)", "x", "I(x^2)")]
emit("trialIntercept", cf[, 1] * back[1]); emit("trialLinear", cf[, 2] * back[2]); emit("trialQuadratic", cf[, 3] * back[3])
opt <- (0.006 - cf[, 2] * back[2]) / (2 * cf[, 3] * back[3])
emit("trialOptimum", ifelse(cf[, 3] < 0, pmin(pmax(opt, 0), 200), NA))
dfun <- update(fit, devFunOnly = TRUE)
th <- getME(fit, "theta")
ours <- th
${terms.grouping.map((g, j) => `ours[grep("^trial:${g}\\\\.", names(th))] <- ${groupingTheta[j]}`).join('\n')}
ours[grep("^trial\\\\.", names(th))] <- c(${trialTheta.join(', ')})
emit("devianceAtOurs", dfun(ours))
`;

/** The plots the engine uses (treatments at timing 'early' plus the control), for R. */
function networkCsv(network: NetworkInput, rates: Map<string, number>): string {
  const lines = ['trial,block,row,col,isB,isRC,rate,y'];
  for (const t of network.trials) {
    const rc = t.design === 'row-column';
    for (const p of t.plots) {
      if (!rates.has(p.treatment) || p.value === null) continue;
      const cells = [t.trial, rc ? 'none' : String(p.block), rc ? String(p.row) : 'none', rc ? String(p.col) : 'none', rc ? 0 : 1, rc ? 1 : 0, rates.get(p.treatment), p.value.toPrecision(17)];
      lines.push(cells.join(','));
    }
  }
  return lines.join('\n') + '\n';
}

function compare(seed: number, trials: number, dropPlots: number, terms: Terms = PLAIN, spread?: readonly number[]) {
  const network = randomCoefficientNetwork(seed, trials, dropPlots, terms === PLAIN ? undefined : ['randomised-blocks', 'row-column'], spread);
  const rates = treatmentRates(network, 'rate', { timing: 'early' });
  const result = analyzeMixedQuadratic(network, rates, { priceRatio: 0.006, confidence: 0.95 });
  const fit = fitMixedQuadratic(mixedQuadraticData(network, rates));
  const th = lme4Theta(fit.theta);
  expect(Object.keys(result.groupingVariances)).toEqual(terms.grouping);
  const run = runR(rScript(terms, th.trial, th.grouping), { 'd.csv': networkCsv(network, rates) });
  const rFixed = rVector(run, 'fixed');
  const rSe = rVector(run, 'se');
  const rG = rVector(run, 'G'); // column-major 3 x 3
  const rDeviance = rVector(run, 'deviance')[0];
  const atOurs = rVector(run, 'devianceAtOurs')[0];
  // Same criterion: lme4's deviance function at our parameters equals our deviance.
  expect(relDiff(atOurs, -2 * (result.logLik as number))).toBeLessThan(1e-9);
  // Our optimum is at least as good as lme4's (to 1e-6 in deviance).
  expect(atOurs).toBeLessThan(rDeviance + 1e-6);
  expect(relDiff(result.logLik as number, rVector(run, 'logLik')[0])).toBeLessThan(LOGLIK_TOL);
  const names = ['intercept', 'linear', 'quadratic'] as const;
  names.forEach((k, i) => {
    expect(relDiff(result.fixed[k] as number, rFixed[i])).toBeLessThan(FIXED_TOL);
    expect(relDiff(result.standardErrors[k] as number, rSe[i])).toBeLessThan(FIXED_TOL);
  });
  const singular = rVector(run, 'singular')[0] === 1;
  expect(result.convergence.varianceAtZero).toBe(singular);
  // G: 1e-3 relative; in a singular fit some elements are ~0, so each is compared against
  // the scale sqrt(G_ii G_jj) (1e-3 of it) instead.
  for (let i = 0; i < 3; i++)
    for (let j = 0; j < 3; j++) {
      const r = rG[j * 3 + i];
      const scale = singular ? Math.sqrt(rG[i * 4] * rG[j * 4]) + 1e-6 * Math.sqrt(rG[0] * rG[0]) : Math.abs(r);
      expect(Math.abs((result.randomCovariance[i][j] as number) - r) / scale).toBeLessThan(VAR_TOL);
    }
  // Population optimum and its delta-method standard error, recomputed in R from lme4's
  // fixed effects and vcov(): 1e-4 relative.
  expect(relDiff(result.optimum.unconstrainedOptimum as number, rVector(run, 'optimum')[0])).toBeLessThan(FIXED_TOL);
  expect(relDiff(result.optimum.se as number, rVector(run, 'optimumSe')[0])).toBeLessThan(FIXED_TOL);
  for (const g of terms.grouping) {
    const rv = rVector(run, `var_${g}`)[0];
    // A variance at the boundary (0) is compared absolutely, against the residual variance.
    if (rv < 1e-8 * (result.residualVariance as number)) expect(result.groupingVariances[g] as number).toBeLessThan(1e-6 * (result.residualVariance as number));
    else expect(relDiff(result.groupingVariances[g] as number, rv)).toBeLessThan(VAR_TOL);
  }
  expect(relDiff(result.residualVariance as number, rVector(run, 'sigma2')[0])).toBeLessThan(VAR_TOL);
  expect(result.convergence.converged).toBe(true);
  const rInt = rVector(run, 'trialIntercept');
  const rLin = rVector(run, 'trialLinear');
  const rQuad = rVector(run, 'trialQuadratic');
  const rOpt = rVector(run, 'trialOptimum');
  expect(result.trialOptima.byTrial.map((t) => t.trial)).toEqual([...network.trials.map((t) => t.trial)].sort());
  result.trialOptima.byTrial.forEach((t, i) => {
    expect(relDiff(t.intercept as number, rInt[i])).toBeLessThan(FIXED_TOL);
    expect(relDiff(t.linear as number, rLin[i])).toBeLessThan(FIXED_TOL);
    expect(relDiff(t.quadratic as number, rQuad[i])).toBeLessThan(FIXED_TOL);
    if (Number.isFinite(rOpt[i])) expect(Math.abs((t.optimum as number) - rOpt[i])).toBeLessThan(FIXED_TOL * Math.max(1, rOpt[i]));
  });
  if (process.env.MIXED_DEBUG) {
    const maxRel = (a: number[], b: number[]) => Math.max(...a.map((v, k) => relDiff(v, b[k])));
    const names3 = ['intercept', 'linear', 'quadratic'] as const;
    console.log(JSON.stringify({
      deviance: { ours: -2 * (result.logLik as number), lme4: rDeviance, lme4AtOurs: atOurs },
      fixed: maxRel(names3.map((k) => result.fixed[k] as number), rFixed),
      se: maxRel(names3.map((k) => result.standardErrors[k] as number), rSe),
      G: maxRel(result.randomCovariance.flat() as number[], rG),
      grouping: Object.fromEntries(terms.grouping.map((g) => [g, [result.groupingVariances[g], rVector(run, `var_${g}`)[0]]])),
      sigma2: relDiff(result.residualVariance as number, rVector(run, 'sigma2')[0]),
      evaluations: result.convergence.evaluations,
      singular: [result.convergence.varianceAtZero, rVector(run, 'singular')[0]],
    }));
  }
  return { result, rDeviance, atOurs };
}

describe('mixed quadratic rate response vs lme4 lmer (REML)', () => {
  it('12 balanced trials: logLik, fixed effects, SEs, G, block and residual variances', () => {
    compare(20261202, 12, 0);
  });
  it('15 trials with 3 plots dropped per trial (unbalanced): same agreement', () => {
    compare(4242, 15, 3);
  });
  it('10 trials alternating randomised blocks and row-column designs (block, row, column variances): same agreement', () => {
    compare(777, 10, 1, MIXED_DESIGNS);
  });
  it('trials differing in intercept only (true G of rank 1): a singular fit on both sides, same agreement', () => {
    compare(31337, 12, 0, PLAIN, [1, 0, 0]);
  });
});
