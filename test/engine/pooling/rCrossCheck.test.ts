// Live cross-check against an independent computation in R (stats and nlme only) on data
// generated here with fixed seeds. The R side writes the (restricted) likelihood itself and
// maximises it with optimize(), solves Paule–Mandel and the Q-profile with uniroot(), gets
// Hartung–Knapp–Sidik–Jonkman intervals from lm() with weights 1/(v + tau²) (lm's residual
// scale is exactly the Knapp–Hartung factor), and fits REML again with nlme::lme
// (varFixed sampling variances, known up to the common factor lme estimates).
// Tolerances: tau² within 1e-5 relative (optimize's own precision is about 1e-8);
// pooled estimate, SEs and interval ends within 1e-6 relative; nlme's REML tau² within
// 1e-4 relative (its optimiser stops earlier than optimize's tol = 1e-14); p-values 1e-5.
import { beforeAll, describe, expect, it } from 'vitest';
import { poolEstimates } from '../../../src/engine/pooling/poolEstimates.js';
import type { PooledResult, PoolingItem, Tau2Method } from '../../../src/engine/pooling/types.js';
import { mulberry32, normalSampler } from '../../../src/engine/stats/random.js';
import { relDiff, runR, RRun } from '../../support/rscript.js';

interface Dataset {
  name: string;
  items: PoolingItem[];
}

/** k trials with varying SEs, a true effect depending on a covariate and a 3-level group. */
function simulate(seed: number, k: number, tau: number): Dataset {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const groups = ['clay', 'loam', 'sand'];
  const items: PoolingItem[] = [];
  for (let i = 0; i < k; i++) {
    const ph = 5.5 + 2 * u();
    const soil = groups[i % 3];
    const se = 0.2 + 0.8 * u();
    const truth = 1 + 0.4 * (ph - 6.5) + (soil === 'sand' ? -0.5 : soil === 'loam' ? 0.2 : 0) + tau * z();
    items.push({ trial: `T${i + 1}`, estimate: truth + se * z(), se, year: 2000 + Math.floor(i / 2), covariates: { ph, soil } });
  }
  return { name: `seed${seed}_k${k}`, items };
}

/** SEs spread over four orders of magnitude (1e-3 to 10): a stress test of the tau² solvers. */
function simulateWideScale(seed: number, k: number, tau: number): Dataset {
  const d = simulate(seed, k, tau);
  const u = mulberry32(seed + 1);
  const z = normalSampler(u);
  for (const it of d.items) {
    it.se = 10 ** (-3 + 4 * u());
    it.estimate = 1 + tau * z() + it.se * z();
  }
  return { name: `wide${seed}_k${k}`, items: d.items };
}

const datasets: Dataset[] = [simulate(101, 8, 0.5), simulate(202, 15, 0.3), simulate(303, 30, 0.8), simulateWideScale(404, 12, 2), simulate(505, 10, 0.02)];

function csvOf(d: Dataset): string {
  return ['id,y,v,ph,soil,year', ...d.items.map((it) => `${it.trial},${it.estimate.toPrecision(17)},${(it.se * it.se).toPrecision(17)},${(it.covariates!.ph as number).toPrecision(17)},${it.covariates!.soil},${it.year}`)].join('\n');
}

const R_SCRIPT = String.raw`
suppressMessages(library(nlme))
loglik <- function(t2, y, v, X, reml) {
  w <- 1 / (v + t2)
  XtWX <- crossprod(X, w * X)
  b <- solve(XtWX, crossprod(X, w * y))
  r <- y - X %*% b
  -0.5 * (sum(log(v + t2)) + sum(w * r^2) + if (reml) as.numeric(determinant(XtWX)$modulus) else 0)
}
fit_tau2 <- function(y, v, X, reml) {
  upper <- 10 * (var(y) + max(v))
  o <- optimize(function(t) loglik(t, y, v, X, reml), c(0, upper), maximum = TRUE, tol = 1e-14)
  # optimize never evaluates the end point: compare with tau2 = 0 explicitly.
  if (loglik(0, y, v, X, reml) >= o$objective) 0 else o$maximum
}
genQ <- function(t2, y, v, X) { w <- 1 / (v + t2); fit <- lm.wfit(X, y, w); sum(w * fit$residuals^2) }
for (name in strsplit(Sys.getenv("DATASETS"), ",")[[1]]) {
  d <- read.csv(paste0(name, ".csv"), stringsAsFactors = FALSE)
  y <- d$y; v <- d$v; k <- length(y); X1 <- matrix(1, k, 1)
  e <- function(what, x) emit(paste0(name, "_", what), x)
  t_reml <- fit_tau2(y, v, X1, TRUE); t_ml <- fit_tau2(y, v, X1, FALSE)
  w0 <- 1 / v; mu0 <- sum(w0 * y) / sum(w0); Q <- sum(w0 * (y - mu0)^2)
  t_dl <- max(0, (Q - (k - 1)) / (sum(w0) - sum(w0^2) / sum(w0)))
  t_pm <- if (genQ(0, y, v, X1) <= k - 1) 0 else uniroot(function(t) genQ(t, y, v, X1) - (k - 1), c(0, 100 * (var(y) + max(v))), tol = 1e-15)$root
  e("tau2_reml", t_reml); e("tau2_ml", t_ml); e("tau2_dl", t_dl); e("tau2_pm", t_pm); e("Q", Q)
  for (m in c("reml", "ml", "dl", "pm")) {
    t2 <- get(paste0("t_", m)); w <- 1 / (v + t2)
    mu <- sum(w * y) / sum(w); se <- sqrt(1 / sum(w))
    e(paste0("mu_", m), mu); e(paste0("se_", m), se)
    e(paste0("wald_lo_", m), mu - qnorm(0.975) * se); e(paste0("wald_hi_", m), mu + qnorm(0.975) * se)
    hk <- lm(y ~ 1, weights = w); ci <- confint(hk, level = 0.95)
    e(paste0("hk_se_", m), summary(hk)$coefficients[1, 2]); e(paste0("hk_lo_", m), ci[1, 1]); e(paste0("hk_hi_", m), ci[1, 2])
    e(paste0("hk_p_", m), summary(hk)$coefficients[1, 4])
    sdp <- sqrt(se^2 + t2)
    e(paste0("pi_lo_", m), mu - qt(0.975, k - 2) * sdp); e(paste0("pi_hi_", m), mu + qt(0.975, k - 2) * sdp)
    e(paste0("prob_pos_", m), pt((0 - mu) / sdp, k - 2, lower.tail = FALSE))
    e(paste0("prob_thr_", m), pt((0.8 - mu) / sdp, k - 2, lower.tail = FALSE))
  }
  # Q-profile interval
  lo_target <- qchisq(0.975, k - 1); hi_target <- qchisq(0.025, k - 1)
  e("qp_lo", if (Q <= lo_target) 0 else uniroot(function(t) genQ(t, y, v, X1) - lo_target, c(0, 1e4), tol = 1e-15)$root)
  e("qp_hi", if (Q <= hi_target) 0 else uniroot(function(t) genQ(t, y, v, X1) - hi_target, c(0, 1e4), tol = 1e-15)$root)
  # nlme: sampling variances known up to one common factor sigma² (varFixed); the same
  # model is the meta-analytic one with variances v * sigma² (fixing sigma at 1 inside lme
  # is not used: its fixed-sigma REML path does not reproduce the restricted likelihood)
  d$idf <- factor(d$id)
  fl <- lme(y ~ 1, random = ~ 1 | idf, weights = varFixed(~ v), method = "REML", data = d, control = lmeControl(tolerance = 1e-10, msTol = 1e-10, niterEM = 0, msMaxIter = 500))
  e("nlme_sigma2", fl$sigma^2)
  e("nlme_tau2", as.numeric(pdMatrix(fl$modelStruct$reStruct)[[1]]) * fl$sigma^2)
  e("nlme_mu", fixef(fl)[1]); e("nlme_se", summary(fl)$tTable[1, 2])
  # meta-regression: pH (continuous) + soil (categorical, clay as reference), REML
  X <- model.matrix(~ ph + factor(soil), d)
  t_mr <- fit_tau2(y, v, X, TRUE); e("mr_tau2", t_mr)
  wm <- 1 / (v + t_mr)
  lmr <- lm(y ~ ph + factor(soil), data = d, weights = wm); sm <- summary(lmr)
  e("mr_b", coef(lmr)); e("mr_se_kh", sm$coefficients[, 2]); e("mr_t", sm$coefficients[, 3]); e("mr_p", sm$coefficients[, 4])
  e("mr_ci_lo", confint(lmr)[, 1]); e("mr_ci_hi", confint(lmr)[, 2])
  e("mr_se_wald", sm$coefficients[, 2] / sm$sigma)
  e("mr_F", sm$fstatistic[1]); e("mr_Fp", pf(sm$fstatistic[1], sm$fstatistic[2], sm$fstatistic[3], lower.tail = FALSE))
  e("mr_QE", sum(w0 * lm.wfit(X, y, w0)$residuals^2))
  e("mr_R2", if (t_reml > 0) max(0, (t_reml - t_mr) / t_reml) else NA)
  # subgroups by soil: each level pooled by REML on its own, Q between from model-based SEs
  lv <- sort(unique(d$soil))
  sg <- sapply(lv, function(g) { idx <- which(d$soil == g); t2 <- if (length(idx) > 1) fit_tau2(y[idx], v[idx], matrix(1, length(idx), 1), TRUE) else 0; ww <- 1 / (v[idx] + t2); c(sum(ww * y[idx]) / sum(ww), 1 / sum(ww), t2) })
  e("sg_mu", sg[1, ]); e("sg_tau2", sg[3, ])
  wb <- 1 / sg[2, ]; e("sg_Qb", sum(wb * (sg[1, ] - sum(wb * sg[1, ]) / sum(wb))^2))
  # leave-one-out and cumulative-by-year pools (REML, HKSJ)
  pool_hk <- function(idx) { yy <- y[idx]; vv <- v[idx]; t2 <- fit_tau2(yy, vv, matrix(1, length(yy), 1), TRUE); ww <- 1 / (vv + t2); f <- lm(yy ~ 1, weights = ww); c(coef(f)[1], summary(f)$coefficients[1, 2], t2, confint(f)[1, ]) }
  loo <- sapply(seq_len(k), function(i) pool_hk(setdiff(seq_len(k), i)))
  e("loo_mu", loo[1, ]); e("loo_se", loo[2, ]); e("loo_tau2", loo[3, ]); e("loo_lo", loo[4, ]); e("loo_hi", loo[5, ])
  ord <- order(d$year, d$id)
  cum <- sapply(2:k, function(j) pool_hk(ord[1:j]))
  e("cum_mu", cum[1, ]); e("cum_tau2", cum[3, ])
  # influence (REML): Cook's distance and deleted residuals from the leave-one-out fits
  w <- 1 / (v + t_reml); mu <- sum(w * y) / sum(w); vmu <- 1 / sum(w)
  e("cook", (mu - loo[1, ])^2 / vmu)
  loo_vmu <- sapply(seq_len(k), function(i) { idx <- setdiff(seq_len(k), i); 1 / sum(1 / (v[idx] + loo[3, i])) })
  e("rstudent", (y - loo[1, ]) / sqrt(v + loo[3, ] + loo_vmu))
  e("rstandard", (y - mu) / sqrt(v + t_reml - vmu))
}
`;

let run: RRun;
const results = new Map<string, Record<string, PooledResult>>();

beforeAll(() => {
  const files: Record<string, string> = {};
  for (const d of datasets) files[`${d.name}.csv`] = csvOf(d);
  process.env.DATASETS = datasets.map((d) => d.name).join(',');
  run = runR(R_SCRIPT, files);
  for (const d of datasets) {
    const byMethod: Record<string, PooledResult> = {};
    for (const m of ['reml', 'ml', 'dl', 'pm'] as Tau2Method[]) byMethod[`${m}_wald`] = poolEstimates(d.items, { tau2: m, interval: 'wald', confidence: 0.95, threshold: 0.8, prediction: 'plug-in-t' });
    for (const m of ['reml', 'ml', 'dl', 'pm'] as Tau2Method[]) byMethod[`${m}_hksj`] = poolEstimates(d.items, { tau2: m, interval: 'hksj', confidence: 0.95, threshold: 0.8, moderators: m === 'reml' ? ['ph', 'soil'] : [] });
    results.set(d.name, byMethod);
  }
});

function r(name: string, what: string): number {
  const key = `${name}_${what}`;
  if (!(key in run.values)) throw new Error(`R did not emit ${key}:\n${run.stdout.slice(0, 3000)}`);
  return run.values[key];
}

function rv(name: string, what: string): number[] {
  const out: number[] = [];
  for (let i = 1; `${name}_${what}[${i}]` in run.values; i++) out.push(run.values[`${name}_${what}[${i}]`]);
  if (out.length === 0 && `${name}_${what}` in run.values) out.push(run.values[`${name}_${what}`]);
  if (out.length === 0) throw new Error(`R did not emit ${name}_${what}`);
  return out;
}

function close(actual: number | null | undefined, expected: number, rel: number, absFloor = 1e-10): void {
  expect(actual).not.toBeNull();
  const diff = Math.abs((actual as number) - expected);
  expect(diff <= rel * Math.abs(expected) || diff <= absFloor, `ours ${actual} vs R ${expected} (rel tol ${rel})`).toBe(true);
}

describe.each(datasets.map((d) => [d.name]))('R cross-check on simulated data %s', (name) => {
  it('tau² by REML, ML, DL and PM (1e-5 relative); Q exact to 1e-10', () => {
    const res = results.get(name)!;
    for (const m of ['reml', 'ml', 'dl', 'pm']) close(res[`${m}_wald`].tau2, r(name, `tau2_${m}`), 1e-5, 1e-12);
    close(res.reml_wald.Q, r(name, 'Q'), 1e-10);
  });

  it('pooled estimate, SE and Wald / HKSJ intervals and p (1e-6 relative)', () => {
    const res = results.get(name)!;
    for (const m of ['reml', 'ml', 'dl', 'pm']) {
      const w = res[`${m}_wald`];
      const h = res[`${m}_hksj`];
      close(w.estimate, r(name, `mu_${m}`), 1e-6);
      close(w.se, r(name, `se_${m}`), 1e-6);
      close(w.lower, r(name, `wald_lo_${m}`), 1e-6);
      close(w.upper, r(name, `wald_hi_${m}`), 1e-6);
      close(h.se, r(name, `hk_se_${m}`), 1e-6);
      close(h.lower, r(name, `hk_lo_${m}`), 1e-6);
      close(h.upper, r(name, `hk_hi_${m}`), 1e-6);
      close(h.p, r(name, `hk_p_${m}`), 1e-5, 1e-12);
    }
  });

  it('plug-in-t prediction interval (t on k - 2 df) and predictive probabilities (1e-6 relative)', () => {
    const res = results.get(name)!;
    for (const m of ['reml', 'ml', 'dl', 'pm']) {
      const w = res[`${m}_wald`];
      close(w.predictionLower, r(name, `pi_lo_${m}`), 1e-6);
      close(w.predictionUpper, r(name, `pi_hi_${m}`), 1e-6);
      close(w.probPositive, r(name, `prob_pos_${m}`), 1e-6);
      close(w.probAboveThreshold, r(name, `prob_thr_${m}`), 1e-6);
    }
  });

  it('Q-profile interval for tau² (roots to 1e-8 relative)', () => {
    const res = results.get(name)!.reml_wald;
    close(res.tau2Lower, r(name, 'qp_lo'), 1e-8, 1e-12);
    close(res.tau2Upper, r(name, 'qp_hi'), 1e-8, 1e-12);
  });

  it('REML tau², mean and SE agree with nlme::lme (varFixed sampling variances scaled by its sigma²): tau² 1e-4 relative (nlme optimiser), mean and SE 1e-6', () => {
    const d = datasets.find((x) => x.name === name)!;
    const scale = Math.sqrt(r(name, 'nlme_sigma2'));
    const res = poolEstimates(d.items.map((it) => ({ ...it, se: it.se * scale })), { tau2: 'reml', interval: 'wald', confidence: 0.95, threshold: 0 });
    // Absolute floor 1e-8: lme works on log(tau), so a zero-boundary REML estimate comes back as ~1e-10.
    close(res.tau2, r(name, 'nlme_tau2'), 1e-4, 1e-8);
    close(res.estimate, r(name, 'nlme_mu'), 1e-6);
    close(res.se, r(name, 'nlme_se'), 1e-6);
  });

  it('meta-regression (REML, Knapp–Hartung): coefficients, SEs, t, p, CI, F, QE, R² against lm with weights 1/(v + tau²)', () => {
    const m = results.get(name)!.reml_hksj.metaRegression!;
    close(m.residualTau2, r(name, 'mr_tau2'), 1e-5, 1e-12);
    const b = rv(name, 'mr_b');
    const se = rv(name, 'mr_se_kh');
    const t = rv(name, 'mr_t');
    const p = rv(name, 'mr_p');
    const lo = rv(name, 'mr_ci_lo');
    const hi = rv(name, 'mr_ci_hi');
    expect(m.coefficients.map((c) => c.term)).toEqual(['intercept', 'ph', 'soil=loam', 'soil=sand']);
    m.coefficients.forEach((c, j) => {
      close(c.estimate, b[j], 1e-6);
      close(c.se, se[j], 1e-6);
      close(c.statistic, t[j], 1e-6);
      close(c.p, p[j], 1e-5, 1e-12);
      close(c.lower, lo[j], 1e-6);
      close(c.upper, hi[j], 1e-6);
    });
    expect(m.moderatorTest!.distribution).toBe('F');
    close(m.moderatorTest!.statistic, r(name, 'mr_F'), 1e-6);
    close(m.moderatorTest!.p, r(name, 'mr_Fp'), 1e-5, 1e-12);
    close(m.residualHeterogeneity!.Q, r(name, 'mr_QE'), 1e-10);
    const r2 = r(name, 'mr_R2');
    if (Number.isNaN(r2)) expect(m.tau2Explained).toBeNull();
    else close(m.tau2Explained, r2, 1e-4, 1e-6);
  });

  it('subgroups by a categorical moderator: level estimates, level tau² and Q between (1e-6 / 1e-5 relative)', () => {
    const sg = results.get(name)!.reml_hksj.metaRegression!.subgroups[0];
    expect(sg.moderator).toBe('soil');
    const mu = rv(name, 'sg_mu');
    const t2 = rv(name, 'sg_tau2');
    sg.groups.forEach((g, j) => {
      close(g.estimate, mu[j], 1e-6);
      close(g.tau2, t2[j], 1e-5, 1e-12);
    });
    close(sg.betweenGroups!.Q, r(name, 'sg_Qb'), 1e-5);
    expect(sg.betweenGroups!.df).toBe(2);
  });

  it('Wald meta-regression SEs equal the KH SEs divided by the lm residual scale', () => {
    const d = datasets.find((x) => x.name === name)!;
    const w = poolEstimates(d.items, { tau2: 'reml', interval: 'wald', confidence: 0.95, threshold: 0, moderators: ['ph', 'soil'] }).metaRegression!;
    const se = rv(name, 'mr_se_wald');
    w.coefficients.forEach((c, j) => close(c.se, se[j], 1e-6));
  });

  it('leave-one-out, cumulative-by-year and influence (REML, HKSJ) against R refits', () => {
    const res = results.get(name)!.reml_hksj;
    const s = res.sensitivity;
    const looMu = rv(name, 'loo_mu');
    const looSe = rv(name, 'loo_se');
    const looTau2 = rv(name, 'loo_tau2');
    const looLo = rv(name, 'loo_lo');
    const looHi = rv(name, 'loo_hi');
    s.leaveOneOut.forEach((row, i) => {
      close(row.estimate, looMu[i], 1e-6);
      close(row.se, looSe[i], 1e-6);
      close(row.tau2, looTau2[i], 1e-5, 1e-12);
      close(row.lower, looLo[i], 1e-6);
      close(row.upper, looHi[i], 1e-6);
    });
    const cumMu = rv(name, 'cum_mu');
    const cumTau2 = rv(name, 'cum_tau2');
    expect(s.cumulative.length).toBe(cumMu.length + 1);
    s.cumulative.slice(1).forEach((row, j) => {
      close(row.estimate, cumMu[j], 1e-6);
      close(row.tau2, cumTau2[j], 1e-5, 1e-12);
    });
    const cook = rv(name, 'cook');
    const rstudent = rv(name, 'rstudent');
    const rstandard = rv(name, 'rstandard');
    s.influence.forEach((row, i) => {
      close(row.cooksDistance, cook[i], 1e-5, 1e-10);
      close(row.studentisedDeletedResidual, rstudent[i], 1e-5);
      close(row.standardisedResidual, rstandard[i], 1e-6);
      close(row.tau2Change, looTau2[i] - (res.tau2 as number), 1e-4, 1e-9);
    });
  });
});
