// One-stage REML with one residual variance per trial against glmmTMB 1.1.5 (dispformula = ~env,
// REML = TRUE) and nlme 3.1-162 (lme with varIdent(form = ~1|env) and a pdBlocked random part
// giving trial, block-within-trial and treatment-by-trial terms, method REML). Tolerances as in
// issue 4: REML log-likelihood within 1e-4 absolute of both. Also (looser, as glmmTMB's own
// optimiser stops at ~1e-6 relative): variance components 1e-3 relative, means 1e-4 relative;
// and at our variance estimates, the means and their SEs by GLS written out in base R, 1e-8.
import { describe, expect, it } from 'vitest';
import { fitOneStage } from '../../../src/engine/onestage/fitOneStage.js';
import { relDiff, runR, rVector } from '../../support/rscript.js';
import { simulateNetwork } from './support/simulateNetwork.js';

const script = `
suppressMessages({ library(glmmTMB); library(nlme) })
d <- read.csv('data.csv', stringsAsFactors = TRUE)
g <- glmmTMB(y ~ 0 + trt + (1|env) + (1|env:block) + (1|env:trt), dispformula = ~env, data = d, REML = TRUE)
emit('tmb_loglik', as.numeric(logLik(g)))
vc <- VarCorr(g)$cond
emit('tmb_trial', vc[['env']][1]); emit('tmb_block', vc[['env:block']][1]); emit('tmb_tt', vc[['env:trt']][1])
emit('tmb_fixef', fixef(g)$cond)
envs <- levels(d$env)
# predict(type = 'disp') gives the residual sd of each trial for the gaussian family
emit('tmb_res', predict(g, newdata = data.frame(env = envs, trt = d$trt[1], block = d$block[1]), type = 'disp')^2)
n <- lme(y ~ 0 + trt, random = list(env = pdBlocked(list(pdIdent(~1), pdIdent(~block - 1), pdIdent(~trt - 1)))),
         weights = varIdent(form = ~1|env), data = d, method = 'REML', control = lmeControl(msMaxIter = 500, maxIter = 500))
emit('nlme_loglik', as.numeric(logLik(n)))
`;

// GLS at given variances, written out plot by plot in base R: V_i = s_i I + trial J + block
// Z_b Z_b' + treatment-by-trial Z_t Z_t' for each trial, then (X'V^-1 X)^-1 and the means.
const glsScript = `
d <- read.csv('data.csv', stringsAsFactors = TRUE)
p <- read.csv('variances.csv', stringsAsFactors = FALSE)
trts <- levels(d$trt)
xvx <- matrix(0, length(trts), length(trts)); xvy <- numeric(length(trts))
for (e in levels(d$env)) {
  s <- d[d$env == e, ]
  n <- nrow(s)
  zb <- outer(as.character(s$block), unique(as.character(s$block)), '==') * 1
  zt <- outer(as.character(s$trt), trts, '==') * 1
  v <- p$residual[p$env == e] * diag(n) + p$trial[1] * matrix(1, n, n) + p$block[1] * zb %*% t(zb) + p$tt[1] * zt %*% t(zt)
  vi <- solve(v)
  xvx <- xvx + t(zt) %*% vi %*% zt; xvy <- xvy + t(zt) %*% vi %*% s$y
}
emit('gls_mean', solve(xvx, xvy))
emit('gls_se', sqrt(diag(solve(xvx))))
`;

describe('one-stage REML, residual variance per trial, vs glmmTMB and nlme', () => {
  // with 5% of plots missing most trials have a layout of their own (the pattern route); with
  // none missing every trial shares one layout (the spectral route, spectralGroups.ts)
  for (const [label, missing] of [['5% of plots missing', 0.05], ['no plot missing', 0]] as const) {
    it(`matches on 30 trials with residual sd varying fourfold, ${label} (seed 5)`, () => {
      const sim = simulateNetwork({ seed: 5, trials: 30, missing, residualSpread: [0.5, 2] });
      const fit = fitOneStage(sim.network, [], { random: ['trial', 'block', 'treatment-by-trial'], residual: 'per-trial', df: 'satterthwaite', confidence: 0.95, profile: false, lrt: false });
      const r = runR(script, { 'data.csv': sim.csv });
      expect(fit.converged).toBe(true);
      expect(Math.abs(fit.logLik - r.values.tmb_loglik)).toBeLessThan(1e-4);
      expect(Math.abs(fit.logLik - r.values.nlme_loglik)).toBeLessThan(1e-4);
      expect(relDiff(fit.variance.trial!, r.values.tmb_trial)).toBeLessThan(1e-3);
      expect(relDiff(fit.variance.block!, r.values.tmb_block)).toBeLessThan(1e-3);
      expect(relDiff(fit.variance['treatment-by-trial']!, r.values.tmb_tt)).toBeLessThan(1e-3);
      const res = rVector(r, 'tmb_res');
      const ours = Object.values(fit.variance.residualByTrial!);
      expect(ours.length).toBe(30);
      ours.forEach((v, i) => expect(relDiff(v, res[i])).toBeLessThan(1e-3));
      const fixef = rVector(r, 'tmb_fixef');
      fit.means.forEach((m, j) => expect(relDiff(m.estimate, fixef[j])).toBeLessThan(1e-4));
      // means and their SEs at our variance estimates, by GLS plot by plot in R (1e-8 relative:
      // the same numbers by another route, free of glmmTMB's optimiser tolerance)
      const v = fit.variance;
      const rows = Object.entries(v.residualByTrial!).map(([env, s2]) => `${env},${s2},${v.trial},${v.block},${v['treatment-by-trial']}`);
      const g = runR(glsScript, { 'data.csv': sim.csv, 'variances.csv': ['env,residual,trial,block,tt', ...rows].join('\n') });
      const glsMean = rVector(g, 'gls_mean');
      const glsSe = rVector(g, 'gls_se');
      fit.means.forEach((m, j) => {
        expect(relDiff(m.estimate, glsMean[j])).toBeLessThan(1e-8);
        expect(relDiff(m.se, glsSe[j])).toBeLessThan(1e-8);
      });
    });
  }
});
