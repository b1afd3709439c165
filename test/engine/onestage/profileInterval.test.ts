// Profile-likelihood intervals for the variance components, checked against an independent
// profile computed in R: a dense REML criterion (-2 logLik_REML with V formed in full, n = 8 x 28
// minus missing plots) minimised over the other variances by optim (Nelder-Mead, then BFGS, on
// log variances). At each end of our interval R's profiled criterion must exceed its own
// minimum by the chi-square(1) 95% quantile, within 1e-4 (optim's precision); a lower end at 0
// needs R's profile at 0 to be below the cut-off. The same script forms the average-information
// matrix densely (y'P V_k P V_l P y) at our estimates to check the variance-component SEs.
import { describe, expect, it } from 'vitest';
import { fitOneStage } from '../../../src/engine/onestage/fitOneStage.js';
import { runR, rVector } from '../../support/rscript.js';
import { simulateNetwork } from './support/simulateNetwork.js';

const script = (ends: number[], theta: number[]): string => `
d <- read.csv('data.csv', stringsAsFactors = TRUE)
X <- model.matrix(~ 0 + trt, d)
Z <- list(model.matrix(~ 0 + env, d), model.matrix(~ 0 + env:block, d), model.matrix(~ 0 + env:trt, d))
Z <- lapply(Z, function(z) z[, colSums(z) > 0, drop = FALSE])
ZZ <- lapply(Z, tcrossprod)
n <- nrow(d); p <- ncol(X)
crit <- function(v) {  # v: trial, block, treatment-by-trial, residual variances
  V <- v[4] * diag(n) + v[1] * ZZ[[1]] + v[2] * ZZ[[2]] + v[3] * ZZ[[3]]
  L <- chol(V)
  Xs <- backsolve(L, X, transpose = TRUE); ys <- backsolve(L, d$y, transpose = TRUE)
  XVX <- crossprod(Xs); b <- solve(XVX, crossprod(Xs, ys)); r <- ys - Xs %*% b
  (n - p) * log(2 * pi) + 2 * sum(log(diag(L))) + as.numeric(determinant(XVX)$modulus) + sum(r^2)
}
fitFree <- function(fixed, value, start) {
  f <- function(lv) { v <- numeric(4); v[-fixed] <- exp(lv); v[fixed] <- value; crit(v) }
  o <- optim(log(start[-fixed]), f, method = 'Nelder-Mead', control = list(maxit = 4000, reltol = 1e-14))
  o <- optim(o$par, f, method = 'BFGS', control = list(maxit = 1000, reltol = 1e-15))
  o$value
}
full <- optim(log(c(1, 0.2, 0.1, 0.3)), function(lv) crit(exp(lv)), method = 'Nelder-Mead', control = list(maxit = 6000, reltol = 1e-14))
full <- optim(full$par, function(lv) crit(exp(lv)), method = 'BFGS', control = list(maxit = 1000, reltol = 1e-15))
emit('min', full$value)
start <- exp(full$par)
ends <- c(${ends.join(', ')})
# average information at our estimates, formed densely: AI_kl = y'P V_k P V_l P y, SE = sqrt(diag(2 AI^-1))
th <- c(${theta.join(', ')})
V <- th[4] * diag(n) + th[1] * ZZ[[1]] + th[2] * ZZ[[2]] + th[3] * ZZ[[3]]
Vi <- solve(V); P <- Vi - Vi %*% X %*% solve(t(X) %*% Vi %*% X, t(X) %*% Vi)
Vk <- c(ZZ, list(diag(n))); Py <- P %*% d$y
AI <- matrix(0, 4, 4)
for (k in 1:4) for (l in 1:4) AI[k, l] <- as.numeric(t(Py) %*% Vk[[k]] %*% P %*% Vk[[l]] %*% Py)
emit('aise', sqrt(diag(2 * solve(AI))))
for (k in 1:3) for (e in 1:2) emit(paste0('prof', k, '_', e), fitFree(k, ends[2 * (k - 1) + e], start))
`;

describe('profile-likelihood intervals and AI standard errors vs a dense REML computation in R', () => {
  it('puts both ends where the profiled criterion rises by qchisq(0.95, 1) (seed 101, 8 trials)', () => {
    const sim = simulateNetwork({ seed: 101, trials: 8, missing: 0.06 });
    const fit = fitOneStage(sim.network, [], { random: ['trial', 'block', 'treatment-by-trial'], residual: 'common', df: 'residual', confidence: 0.95, lrt: false, profile: true });
    const comps = ['trial', 'block', 'treatment-by-trial'].map((n) => fit.varianceComponents.find((v) => v.name === n)!);
    const ends = comps.flatMap((c) => [c.profileLower!, c.profileUpper!]);
    const theta = [...comps.map((c) => c.estimate.toPrecision(17)), fit.variance.residual!.toPrecision(17)].map(Number);
    const r = runR(script(ends, theta), { 'data.csv': sim.csv });
    // variance-component SEs from the inverse average information, vs the dense formula (1e-8 relative)
    const aise = rVector(r, 'aise');
    [...comps, fit.varianceComponents.find((v) => v.name === 'residual')!].forEach((c, k) => expect(Math.abs(c.se! - aise[k]) / aise[k]).toBeLessThan(1e-8));
    const cut = 3.841458820694124; // qchisq(0.95, 1)
    expect(Math.abs(r.values.min - fit.minusTwoLogLik)).toBeLessThan(1e-6);
    comps.forEach((c, k) => {
      expect(c.profileLower!).toBeLessThan(c.estimate);
      expect(c.profileUpper!).toBeGreaterThan(c.estimate);
      const lower = rVector(r, `prof${k + 1}_1`)[0] - r.values.min;
      const upper = rVector(r, `prof${k + 1}_2`)[0] - r.values.min;
      if (c.profileLower === 0) expect(lower).toBeLessThan(cut);
      else expect(Math.abs(lower - cut)).toBeLessThan(1e-4);
      expect(Math.abs(upper - cut)).toBeLessThan(1e-4);
    });
  });
});
