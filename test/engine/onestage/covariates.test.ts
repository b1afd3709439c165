// Fixed trial covariates in the one-stage model against R: lme4 1.1-31 (lmer, REML) with
// lmerTest 3.1-3 (contest: Satterthwaite) and pbkrtest 0.5.2 (Kenward-Roger), and glmmTMB 1.1.5
// for a residual variance per trial, on networks drawn at random with fixed seeds. R gets the
// covariate centred as the engine centres it (mean over the trials used). Tolerances as in
// issue 4: REML log-likelihood 1e-6 relative (glmmTMB: 1e-4 absolute); variance components 1e-4
// relative; treatment means, slope, contrast estimates and SEs 1e-5 relative; Satterthwaite and
// Kenward-Roger df 1e-3 relative.
import { describe, expect, it } from 'vitest';
import { fitOneStage } from '../../../src/engine/onestage/fitOneStage.js';
import { resolveContrast } from '../../../src/engine/contrasts/resolve.js';
import { mulberry32 } from '../../../src/engine/stats/random.js';
import type { NetworkInput } from '../../../src/engine/types.js';
import { relDiff, runR, rVector } from '../../support/rscript.js';
import { toApiError } from '../../../src/api/errors.js';
import { simulateNetwork } from './support/simulateNetwork.js';

/** The simulated network with a rainfall per trial (one trial without) whose slope is `slope` per mm. */
function withRainfall(seed: number, trials: number, slope: number, residualSpread?: readonly [number, number]): { network: NetworkInput; csv: string; centre: number } {
  const sim = simulateNetwork({ seed, trials, missing: 0.05, residualSpread });
  const uniform = mulberry32(seed + 1);
  const rain = sim.network.trials.map((_, i) => (i === 2 ? null : Math.round(250 + 250 * uniform())));
  const used = rain.filter((r): r is number => r !== null);
  const centre = used.reduce((a, b) => a + b, 0) / used.length;
  const network: NetworkInput = {
    ...sim.network,
    trials: sim.network.trials.map((t, i) => ({
      ...t,
      covariates: { rainfall: rain[i] },
      plots: t.plots.map((p) => (p.value === null || rain[i] === null ? p : { ...p, value: p.value + slope * (rain[i]! - 350) })),
    })),
  };
  // R sees the trials used, with the covariate centred as the engine centres it
  const lines = ['env,block,trt,y,rainc'];
  network.trials.forEach((t, i) => {
    if (rain[i] === null) return;
    for (const p of t.plots) if (p.value !== null) lines.push(`${t.trial},${p.block},${p.treatment},${p.value},${rain[i]! - centre}`);
  });
  return { network, csv: lines.join('\n') + '\n', centre };
}

const random = ['trial', 'block', 'treatment-by-trial'] as const;

describe('one-stage REML with a fixed trial covariate', () => {
  it('common residual: matches lme4 / lmerTest / pbkrtest, and leaves out the trial without a value', () => {
    const { network, csv, centre } = withRainfall(515, 14, 0.004);
    const codes = network.treatments.map((t) => t.code);
    const contrast = resolveContrast({ name: 'treated_vs_control', kind: 'treated-vs-control' }, network.treatments, 'CTL');
    const l = codes.map((c) => contrast.coefficients[c] / contrast.divisor);
    const r = runR(
      `suppressMessages({ library(lme4); library(lmerTest); library(pbkrtest) })
d <- read.csv('data.csv', stringsAsFactors = TRUE)
d$trt <- factor(d$trt, levels = c(${codes.map((c) => `'${c}'`).join(', ')}))
f <- lmer(y ~ 0 + trt + rainc + (1|env) + (1|env:block) + (1|env:trt), data = d, REML = TRUE,
          control = lmerControl(optimizer = 'bobyqa', optCtrl = list(rhoend = 1e-12, maxfun = 1e5)))
emit('loglik', as.numeric(logLik(f)))
vc <- as.data.frame(VarCorr(f))
emit('v', c(vc$vcov[vc$grp == 'env'], vc$vcov[vc$grp == 'env:block'], vc$vcov[vc$grp == 'env:trt'], vc$vcov[vc$grp == 'Residual']))
emit('fixef', fixef(f))
emit('fixse', sqrt(diag(as.matrix(vcov(f)))))
for (row in list(list('c', c(${l.join(', ')}, 0)), list('s', c(${codes.map(() => '0').join(', ')}, 1)))) {
  L <- matrix(row[[2]], 1)
  s <- contest(f, L, ddf = 'Satterthwaite', joint = FALSE)
  k <- contest(f, L, ddf = 'Kenward-Roger', joint = FALSE)
  emit(paste0(row[[1]], '_est'), s$Estimate); emit(paste0(row[[1]], '_se'), s[['Std. Error']]); emit(paste0(row[[1]], '_sdf'), s$df)
  emit(paste0(row[[1]], '_krdf'), k$df); emit(paste0(row[[1]], '_krse'), k[['Std. Error']])
}
`,
      { 'data.csv': csv },
    );
    const options = { random: [...random], residual: 'common' as const, confidence: 0.95, lrt: false, profile: false, covariates: ['rainfall'] };
    const fit = fitOneStage(network, [contrast], { ...options, df: 'satterthwaite' });
    expect(fit.converged).toBe(true);
    expect(fit.nTrials).toBe(13);
    expect(fit.warnings.some((w) => w.includes('left out') && w.includes(network.trials[2].trial))).toBe(true);
    expect(relDiff(fit.logLik, r.values.loglik)).toBeLessThan(1e-6);
    const v = rVector(r, 'v');
    [fit.variance.trial!, fit.variance.block!, fit.variance['treatment-by-trial']!, fit.variance.residual!].forEach((x, k) => expect(relDiff(x, v[k])).toBeLessThan(1e-4));
    const fixef = rVector(r, 'fixef');
    const fixse = rVector(r, 'fixse');
    fit.means.forEach((m, j) => {
      expect(relDiff(m.estimate, fixef[j])).toBeLessThan(1e-5);
      expect(relDiff(m.se, fixse[j])).toBeLessThan(1e-5);
    });
    const [slope] = fit.covariates;
    expect(slope.name).toBe('rainfall');
    expect(slope.centre).toBeCloseTo(centre, 12);
    expect(relDiff(slope.estimate!, fixef[codes.length])).toBeLessThan(1e-5);
    expect(relDiff(slope.se!, r.values.s_se)).toBeLessThan(1e-5);
    expect(relDiff(slope.df!, r.values.s_sdf)).toBeLessThan(1e-3);
    // the simulated slope (0.004 per mm) is recovered within 3 standard errors
    expect(Math.abs(slope.estimate! - 0.004)).toBeLessThan(3 * slope.se!);
    const c = fit.contrasts[0];
    expect(relDiff(c.estimate!, r.values.c_est)).toBeLessThan(1e-5);
    expect(relDiff(c.se!, r.values.c_se)).toBeLessThan(1e-5);
    expect(relDiff(c.df!, r.values.c_sdf)).toBeLessThan(1e-3);
    const kr = fitOneStage(network, [contrast], { ...options, df: 'kenward-roger' });
    expect(relDiff(kr.covariates[0].df!, r.values.s_krdf)).toBeLessThan(1e-3);
    expect(relDiff(kr.covariates[0].se!, r.values.s_krse)).toBeLessThan(1e-5);
    expect(relDiff(kr.contrasts[0].df!, r.values.c_krdf)).toBeLessThan(1e-3);
    expect(relDiff(kr.contrasts[0].se!, r.values.c_krse)).toBeLessThan(1e-5);
  });

  it('residual variance per trial: matches glmmTMB (dispformula = ~env)', () => {
    const { network, csv } = withRainfall(616, 12, -0.003, [0.5, 2]);
    const codes = network.treatments.map((t) => t.code);
    const r = runR(
      `suppressMessages(library(glmmTMB))
d <- read.csv('data.csv', stringsAsFactors = TRUE)
d$trt <- factor(d$trt, levels = c(${codes.map((c) => `'${c}'`).join(', ')}))
g <- glmmTMB(y ~ 0 + trt + rainc + (1|env) + (1|env:block) + (1|env:trt), dispformula = ~env, data = d, REML = TRUE)
emit('loglik', as.numeric(logLik(g)))
emit('fixef', fixef(g)$cond)
`,
      { 'data.csv': csv },
    );
    const fit = fitOneStage(network, [], { random: [...random], residual: 'per-trial', df: 'satterthwaite', confidence: 0.95, lrt: false, profile: false, covariates: ['rainfall'] });
    expect(fit.converged).toBe(true);
    expect(Math.abs(fit.logLik - r.values.loglik)).toBeLessThan(1e-4);
    // glmmTMB's own optimiser stops earlier than ours: its coefficients agree to about 1e-4
    const fixef = rVector(r, 'fixef');
    expect(Math.abs(fit.covariates[0].estimate! - fixef[codes.length])).toBeLessThan(1e-4 * Math.max(1, Math.abs(fixef[codes.length])));
  });

  it('a covariate without spread, or one the others determine, is a clear input error (no fit attempted)', () => {
    const sim = simulateNetwork({ seed: 9, trials: 5 });
    const fit = (cov: (i: number) => Record<string, number>, names: string[]) => () =>
      fitOneStage({ ...sim.network, trials: sim.network.trials.map((t, i) => ({ ...t, covariates: cov(i) })) }, [], { random: [...random], residual: 'common', df: 'residual', confidence: 0.95, lrt: false, profile: false, covariates: names });
    expect(fit(() => ({ ph: 6.5 }), ['ph'])).toThrow(/"ph" has the same value in every trial used \(6\.5\)/);
    expect(fit((i) => ({ rain: 300 + 40 * i, et: 2 * (300 + 40 * i) + 3 }), ['rain', 'et'])).toThrow(/"et" is a linear combination of "rain"/);
    let thrown: unknown = null;
    try {
      fit(() => ({ ph: 6.5 }), ['ph'])();
    } catch (e) {
      thrown = e;
    }
    expect(toApiError(thrown).code).toBe('invalid-input');
  });

  it('a covariate that is not a number is an error naming the trial', () => {
    const sim = simulateNetwork({ seed: 7, trials: 3 });
    const network: NetworkInput = { ...sim.network, trials: sim.network.trials.map((t, i) => ({ ...t, covariates: { soil: i === 1 ? 'clay' : 5 } })) };
    expect(() => fitOneStage(network, [], { random: [...random], residual: 'common', df: 'residual', confidence: 0.95, lrt: false, profile: false, covariates: ['soil'] })).toThrow(/E0002.*soil.*not a number/);
  });
});
