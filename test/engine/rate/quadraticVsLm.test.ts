// Per-trial quadratic curves and optima against R's lm (stats package), on rate-trial data
// generated at random here: y ~ block + rate + I(rate^2) with sum-to-zero block contrasts
// (so the intercept is the mean over blocks, as the engine reports it).
// Tolerance: 1e-8 relative on coefficients, their standard errors, optima and AICc.
import { describe, expect, it } from 'vitest';
import { analyzeRateResponse } from '../../../src/engine/rate/analyzeRateResponse.js';
import { runR, rVector, relDiff } from '../../support/rscript.js';
import { generateRateNetwork, quadraticCurve, quadraticPlateauCurve, exponentialCurve, trialCsv, trialCsvRowCol } from './generateRateNetwork.js';

const TOL = 1e-8;
const priceRatio = 0.006;

const network = generateRateNetwork({
  seed: 20261201,
  trials: 6,
  curves: [quadraticCurve(6, 0.03, -0.00008), quadraticPlateauCurve(5, 0.04, 150), exponentialCurve(7, 2.5, 0.015)],
  designs: ['randomised-blocks', 'randomised-blocks', 'completely-randomised'],
  dropPlots: 2,
  sd: 0.3,
});

const rScript = (files: string[]) => `
r <- ${priceRatio}
files <- c(${files.map((f) => `"${f}"`).join(', ')})
for (i in seq_along(files)) {
  d <- read.csv(files[i], colClasses = c("character", "numeric", "numeric"))
  d$block <- factor(d$block)
  fit <- if (nlevels(d$block) > 1) lm(y ~ block + rate + I(rate^2), data = d, contrasts = list(block = "contr.sum")) else lm(y ~ rate + I(rate^2), data = d)
  cf <- coef(fit)
  emit(paste0("a", i), cf[["(Intercept)"]])
  emit(paste0("b", i), cf[["rate"]])
  emit(paste0("c", i), cf[["I(rate^2)"]])
  emit(paste0("opt", i), (r - cf[["rate"]]) / (2 * cf[["I(rate^2)"]]))
  se <- summary(fit)$coefficients[, "Std. Error"]
  emit(paste0("sea", i), se[["(Intercept)"]]); emit(paste0("seb", i), se[["rate"]]); emit(paste0("sec", i), se[["I(rate^2)"]])
  k <- attr(logLik(fit), "df"); n <- nrow(d)
  emit(paste0("aicc", i), AIC(fit) + 2 * k * (k + 1) / (n - k - 1))
}
`;

function compareWithLm(timing: string | null) {
  const result = analyzeRateResponse(network, { factor: 'rate', model: 'best', priceRatio, at: timing ? { timing } : undefined, profitableWithin: 0, bootstrap: 0, seed: 1, confidence: 0.95 });
  const quad = analyzeRateResponse(network, { factor: 'rate', model: 'quadratic', priceRatio, at: timing ? { timing } : undefined, profitableWithin: 0, bootstrap: 0, seed: 1, confidence: 0.95 });
  const files: Record<string, string> = {};
  network.trials.forEach((t, i) => (files[`t${i + 1}.csv`] = trialCsv(network, t, timing)));
  const run = runR(rScript(Object.keys(files)), files);
  network.trials.forEach((t, i) => {
    const tr = quad.trials[i];
    expect(tr.trial).toBe(t.trial);
    expect(tr.model).toBe('quadratic');
    expect(relDiff(tr.params.intercept as number, rVector(run, `a${i + 1}`)[0])).toBeLessThan(TOL);
    expect(relDiff(tr.params.linear as number, rVector(run, `b${i + 1}`)[0])).toBeLessThan(TOL);
    expect(relDiff(tr.params.quadratic as number, rVector(run, `c${i + 1}`)[0])).toBeLessThan(TOL);
    expect(relDiff(tr.standardErrors.intercept as number, rVector(run, `sea${i + 1}`)[0])).toBeLessThan(TOL);
    expect(relDiff(tr.standardErrors.linear as number, rVector(run, `seb${i + 1}`)[0])).toBeLessThan(TOL);
    expect(relDiff(tr.standardErrors.quadratic as number, rVector(run, `sec${i + 1}`)[0])).toBeLessThan(TOL);
    const rOpt = rVector(run, `opt${i + 1}`)[0];
    expect(relDiff(tr.unconstrainedOptimum as number, rOpt)).toBeLessThan(TOL);
    // Capped to the tested range 0..200, with the flag saying so.
    const capped = Math.min(200, Math.max(0, rOpt));
    expect(Math.abs((tr.optimum as number) - capped)).toBeLessThan(TOL * 200);
    if (rOpt > 200) expect(tr.flags).toContain('above-tested-range');
    if (rOpt < 0) expect(tr.flags).toContain('no-input-pays');
    const row = result.trials[i].aicTable?.find((r) => r.model === 'quadratic');
    expect(relDiff(row?.aicc as number, rVector(run, `aicc${i + 1}`)[0])).toBeLessThan(TOL);
  });
  return quad;
}

describe('per-trial quadratic vs R lm (y ~ block + rate + I(rate^2))', () => {
  it('at one timing plus the control: coefficients, standard errors, optimum and AICc within 1e-8 relative', () => {
    compareWithLm('early');
  });
  it('averaged over timings (all plots): same agreement', () => {
    compareWithLm(null);
  });
});

describe('row-column trials: rows and columns as offsets, vs R lm (y ~ row + col + rate + I(rate^2))', () => {
  it('coefficients, standard errors and optimum within 1e-8 relative', () => {
    const rc = generateRateNetwork({ seed: 4711, trials: 3, curves: [quadraticCurve(6, 0.03, -8e-5)], designs: ['row-column'], sd: 0.3 });
    const res = analyzeRateResponse(rc, { factor: 'rate', model: 'quadratic', priceRatio, profitableWithin: 0, bootstrap: 0, seed: 1, confidence: 0.95 });
    const files: Record<string, string> = {};
    rc.trials.forEach((t, i) => (files[`t${i + 1}.csv`] = trialCsvRowCol(rc, t, null)));
    const run = runR(
      `
for (i in 1:${rc.trials.length}) {
  d <- read.csv(paste0("t", i, ".csv")); d$row <- factor(d$row); d$col <- factor(d$col)
  fit <- lm(y ~ row + col + rate + I(rate^2), data = d, contrasts = list(row = "contr.sum", col = "contr.sum"))
  cf <- coef(fit); se <- summary(fit)$coefficients[, "Std. Error"]
  emit(paste0("a", i), cf[["(Intercept)"]]); emit(paste0("b", i), cf[["rate"]]); emit(paste0("c", i), cf[["I(rate^2)"]])
  emit(paste0("seb", i), se[["rate"]]); emit(paste0("sec", i), se[["I(rate^2)"]])
  emit(paste0("opt", i), (${priceRatio} - cf[["rate"]]) / (2 * cf[["I(rate^2)"]]))
}
`,
      files,
    );
    rc.trials.forEach((_, i) => {
      const tr = res.trials[i];
      expect(relDiff(tr.params.intercept as number, rVector(run, `a${i + 1}`)[0])).toBeLessThan(TOL);
      expect(relDiff(tr.params.linear as number, rVector(run, `b${i + 1}`)[0])).toBeLessThan(TOL);
      expect(relDiff(tr.params.quadratic as number, rVector(run, `c${i + 1}`)[0])).toBeLessThan(TOL);
      expect(relDiff(tr.standardErrors.linear as number, rVector(run, `seb${i + 1}`)[0])).toBeLessThan(TOL);
      expect(relDiff(tr.standardErrors.quadratic as number, rVector(run, `sec${i + 1}`)[0])).toBeLessThan(TOL);
      expect(relDiff(tr.unconstrainedOptimum as number, rVector(run, `opt${i + 1}`)[0])).toBeLessThan(TOL);
    });
  });
});
