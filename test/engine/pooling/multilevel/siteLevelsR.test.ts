// Live cross-check of the site-and-trial pooling against R on data simulated here (unbalanced:
// 1 to 6 trials per site, SEs varying tenfold):
// - nlme::lme(y ~ 1, random = ~ 1 | site/trial, weights = varFixed(~ v), lmeControl(sigma = 1)),
//   the standard way to fit a multilevel meta-analysis with known sampling variances. Compared
//   for ML only: with sigma fixed, lme's REML maximises a different criterion (nlme 3.1 as
//   installed here; on one simulated network its REML logLik at its own optimum was -73.650 while
//   the written-out restricted likelihood there is -73.321 and its true maximum -73.299), so REML
//   is checked against the written-out likelihood below and the ML fits against lme;
// - a dense REML/ML likelihood written out in R (solve and determinant on the full V), maximised
//   with optim (L-BFGS-B, tau² >= 0) and polished by nested optimize (the higher of the two kept), and its profile intervals by optimize + uniroot;
// - the BLUP of each site's mean and its prediction error variance from Henderson's mixed-model
//   equations written out densely in R at our estimates.
// Tolerances: tau² within 1e-5 relative of the dense optimum (absolute 1e-6 near zero, where the
// profile is flat and optim stops at a slightly lower likelihood than ours) and 1e-4
// of nlme (its optimiser stops earlier); mean and SE 1e-6 (1e-5 vs nlme); logLik 1e-8 relative;
// BLUPs and their SEs 1e-8 at the same variances; profile ends 1e-4 relative.
import { beforeAll, describe, expect, it } from 'vitest';
import { poolSiteLevels } from '../../../../src/engine/pooling/multilevel/poolSiteLevels.js';
import type { SiteLevelItem, SiteLevelPooling } from '../../../../src/engine/pooling/multilevel/types.js';
import { mulberry32, normalSampler } from '../../../../src/engine/stats/random.js';
import { relDiff, runR, rVector, type RRun } from '../../../support/rscript.js';

interface Case {
  name: string;
  items: SiteLevelItem[];
  method: 'reml' | 'ml';
}

function simulate(seed: number, sites: number, siteSd: number, trialSd: number): SiteLevelItem[] {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const items: SiteLevelItem[] = [];
  for (let s = 0; s < sites; s++) {
    const a = siteSd * z();
    const n = 1 + Math.floor(u() * 6);
    for (let j = 0; j < n; j++) {
      const se = 0.15 + 1.35 * u();
      items.push({ site: `S${s + 1}`, trial: `S${s + 1}-${2010 + j}`, se, estimate: 1.2 + a + trialSd * z() + se * z() });
    }
  }
  return items;
}

const cases: Case[] = [
  { name: 'a', items: simulate(11, 14, 0.8, 0.4), method: 'reml' },
  { name: 'b', items: simulate(22, 25, 0.3, 0.7), method: 'reml' },
  { name: 'c', items: simulate(33, 10, 1.0, 0.0), method: 'ml' },
  { name: 'd', items: simulate(44, 18, 0.0, 0.5), method: 'reml' },
  { name: 'e', items: simulate(55, 20, 0.6, 0.5), method: 'ml' },
];

const R_SCRIPT = String.raw`
suppressMessages(library(nlme))
dense_ll <- function(s2, t2, d, reml) {
  n <- nrow(d)
  V <- diag(d$v + t2, n) + s2 * outer(d$site, d$site, "==")
  Vi <- solve(V); one <- rep(1, n)
  c <- sum(Vi); mu <- sum(Vi %*% d$y) / c; r <- d$y - mu
  ld <- as.numeric(determinant(V)$modulus)
  -0.5 * ((n - reml) * log(2 * pi) + ld + as.numeric(t(r) %*% Vi %*% r) + if (reml) log(c) else 0)
}
dense_mu <- function(s2, t2, d) {
  n <- nrow(d); V <- diag(d$v + t2, n) + s2 * outer(d$site, d$site, "=="); Vi <- solve(V)
  c(sum(Vi %*% d$y) / sum(Vi), 1 / sum(Vi))
}
for (name in strsplit(Sys.getenv("CASES"), ",")[[1]]) {
  d <- read.csv(paste0(name, ".csv"), stringsAsFactors = FALSE)
  reml <- as.integer(readLines(paste0(name, ".method")) == "reml")
  e <- function(what, x) emit(paste0(name, "_", what), x)
  up <- 10 * (var(d$y) + max(d$v))
  f <- function(p) -dense_ll(p[1], p[2], d, reml)
  best <- NULL
  for (st in list(c(0.5, 0.5) * var(d$y), c(0.9, 0.1) * var(d$y), c(0.1, 0.9) * var(d$y), c(0, 0.5) * var(d$y), c(0.5, 0) * var(d$y))) {
    o <- optim(st, f, method = "L-BFGS-B", lower = c(0, 0), upper = c(up, up), control = list(factr = 1, pgtol = 0, maxit = 1000))
    if (is.null(best) || o$value < best$value) best <- o
  }
  # polish: nested optimize (outer trial tau², inner site tau², ends compared), kept if higher
  inner <- function(t2) { o <- optimize(function(s) dense_ll(s, t2, d, reml), c(0, up), maximum = TRUE, tol = 1e-13)
    z <- dense_ll(0, t2, d, reml); if (z >= o$objective) c(0, z) else c(o$maximum, o$objective) }
  ot <- optimize(function(t) inner(t)[2], c(0, up), maximum = TRUE, tol = 1e-13)
  t2n <- if (inner(0)[2] >= ot$objective) 0 else ot$maximum; s2n <- inner(t2n)[1]
  if (dense_ll(s2n, t2n, d, reml) > -best$value) best <- list(par = c(s2n, t2n), value = -dense_ll(s2n, t2n, d, reml))
  e("dense_site", best$par[1]); e("dense_trial", best$par[2]); e("dense_ll", -best$value)
  m <- dense_mu(best$par[1], best$par[2], d); e("dense_mu", m[1]); e("dense_se", sqrt(m[2]))
  # our estimates, read back: the likelihood there, BLUPs and PEV by Henderson's equations
  ours <- as.numeric(readLines(paste0(name, ".ours")))
  s2 <- ours[1]; t2 <- ours[2]
  e("ll_at_ours", dense_ll(s2, t2, d, reml))
  sites <- unique(d$site); trials <- d$trial
  X <- matrix(1, nrow(d), 1)
  Zs <- outer(d$site, sites, "=="); Zt <- outer(d$trial, unique(trials), "==")
  Ri <- diag(1 / d$v)
  if (s2 > 0 && t2 > 0) {
    Z <- cbind(Zs, Zt) * 1; Ginv <- diag(c(rep(1 / s2, length(sites)), rep(1 / t2, ncol(Zt))))
    C <- rbind(cbind(t(X) %*% Ri %*% X, t(X) %*% Ri %*% Z), cbind(t(Z) %*% Ri %*% X, t(Z) %*% Ri %*% Z + Ginv))
    sol <- solve(C, rbind(t(X) %*% Ri %*% d$y, t(Z) %*% Ri %*% d$y)); Ci <- solve(C)
    K <- cbind(1, diag(length(sites)), matrix(0, length(sites), ncol(Zt)))
    e("blup", K %*% sol); e("blup_se", sqrt(diag(K %*% Ci %*% t(K))))
  }
  # profile intervals (chi-square 1 df, 95%)
  cut <- -best$value - qchisq(0.95, 1) / 2
  prof <- function(x, which) {
    g <- function(o) if (which == 1) dense_ll(x, o, d, reml) else dense_ll(o, x, d, reml)
    hi <- max(up, 2 * x); o <- optimize(g, c(0, hi), maximum = TRUE, tol = 1e-12)
    max(o$objective, g(0)) - cut
  }
  for (w in 1:2) {
    hat <- best$par[w]
    lo <- if (hat > 0 && prof(0, w) < 0) uniroot(function(x) prof(x, w), c(0, hat), tol = 1e-14)$root else 0
    hi <- max(2 * hat, up / 10); while (prof(hi, w) > 0) hi <- 2 * hi
    upr <- uniroot(function(x) prof(x, w), c(hat, hi), tol = 1e-14)$root
    e(paste0("prof", w, "_lower"), lo); e(paste0("prof", w, "_upper"), upr)
  }
  fit <- lme(y ~ 1, random = ~ 1 | site/trial, data = d, weights = varFixed(~ v), method = if (reml) "REML" else "ML",
             control = lmeControl(sigma = 1, msMaxIter = 1000, msTol = 1e-14, tolerance = 1e-14, returnObject = TRUE))
  vc <- as.numeric(VarCorr(fit)[c(2, 4), "Variance"])
  e("nlme_site", vc[1]); e("nlme_trial", vc[2]); e("nlme_mu", fixef(fit)); e("nlme_se", sqrt(vcov(fit)[1, 1]))
}
`;

function csv(items: SiteLevelItem[]): string {
  return ['site,trial,y,v', ...items.map((i) => `${i.site},${i.trial},${i.estimate.toPrecision(17)},${(i.se * i.se).toPrecision(17)}`)].join('\n');
}

const ours = new Map<string, SiteLevelPooling>();
let r: RRun;

beforeAll(() => {
  const files: Record<string, string> = {};
  for (const c of cases) {
    const res = poolSiteLevels(c.items, { method: c.method, confidence: 0.95, threshold: 0 });
    ours.set(c.name, res);
    files[`${c.name}.csv`] = csv(c.items);
    files[`${c.name}.method`] = c.method;
    files[`${c.name}.ours`] = `${(res.siteTau2 ?? NaN).toPrecision(17)}\n${(res.trialTau2 ?? NaN).toPrecision(17)}`;
  }
  process.env.CASES = cases.map((c) => c.name).join(',');
  r = runR(R_SCRIPT, files);
}, 600_000);

const close = (a: number | null, b: number, rel: number, abs: number) => {
  expect(a).not.toBeNull();
  expect(Math.abs((a as number) - b)).toBeLessThanOrEqual(Math.max(rel * Math.abs(b), abs));
};

describe.each(cases)('site-and-trial pooling, case $name ($method)', (c) => {
  const v = (what: string) => r.values[`${c.name}_${what}`];
  it('finds the dense R optimum: tau², mean, SE and logLik', () => {
    const o = ours.get(c.name)!;
    expect(o.converged).toBe(true);
    close(o.siteTau2, v('dense_site'), 1e-5, 1e-6);
    close(o.trialTau2, v('dense_trial'), 1e-5, 1e-6);
    close(o.estimate, v('dense_mu'), 1e-6, 1e-9);
    close(o.se, v('dense_se'), 1e-6, 1e-9);
    expect(relDiff(o.logLik!, v('ll_at_ours'))).toBeLessThan(1e-10);
    // never below R's optimum: our maximum is at least as high
    expect(o.logLik!).toBeGreaterThanOrEqual(v('dense_ll') - 1e-9 * Math.abs(v('dense_ll')));
  });
  // nlme with sigma fixed maximises another criterion by REML (see the header): compared by ML only.
  if (c.method === 'ml') it('agrees with nlme lme (varFixed, sigma = 1) by ML', () => {
    const o = ours.get(c.name)!;
    close(o.siteTau2, v('nlme_site'), 1e-4, 1e-5);
    close(o.trialTau2, v('nlme_trial'), 1e-4, 1e-5);
    close(o.estimate, v('nlme_mu'), 1e-5, 1e-7);
    close(o.se, v('nlme_se'), 1e-5, 1e-7);
  });
  it('profile-likelihood intervals match optimize + uniroot in R', () => {
    const o = ours.get(c.name)!;
    close(o.siteTau2Lower, v('prof1_lower'), 1e-4, 1e-6);
    close(o.siteTau2Upper, v('prof1_upper'), 1e-4, 1e-6);
    close(o.trialTau2Lower, v('prof2_lower'), 1e-4, 1e-6);
    close(o.trialTau2Upper, v('prof2_upper'), 1e-4, 1e-6);
  });
  it("site BLUPs and their SEs match Henderson's equations (when both tau² > 0)", () => {
    const o = ours.get(c.name)!;
    if (!(o.siteTau2! > 0 && o.trialTau2! > 0)) {
      expect(`${c.name}_blup[1]` in r.values).toBe(false);
      return;
    }
    const blup = rVector(r, `${c.name}_blup`);
    const blupSe = rVector(r, `${c.name}_blup_se`);
    expect(blup.length).toBe(o.siteEstimates.length);
    o.siteEstimates.forEach((s, i) => {
      close(s.estimate, blup[i], 1e-8, 1e-10);
      close(s.se, blupSe[i], 1e-8, 1e-10);
    });
  });
});

describe('site-and-trial pooling: what it reports around the fit', () => {
  it('I² parts add up, repeatability is the site share, intervals nest', () => {
    const o = ours.get('a')!;
    expect(o.I2Site! + o.I2Trial!).toBeCloseTo(o.I2Total!, 12);
    expect(o.siteRepeatability!).toBeCloseTo(o.siteTau2! / (o.siteTau2! + o.trialTau2!), 12);
    expect(o.newSiteLower!).toBeLessThan(o.lower!);
    expect(o.newSiteUpper!).toBeGreaterThan(o.upper!);
    for (const s of o.siteEstimates) expect(s.nextTrialUpper! - s.nextTrialLower!).toBeGreaterThan(0);
    expect(o.leaveOneSiteOut.length).toBe(o.sites);
  });
  it('refuses to split the variance when no site has two trials', () => {
    const single = cases[0].items.filter((it, i, all) => all.findIndex((x) => x.site === it.site) === i);
    const o = poolSiteLevels(single, { method: 'reml', confidence: 0.95, threshold: 0 });
    expect(o.estimate).toBeNull();
    expect(o.notes.join(' ')).toMatch(/no site has two or more trials/);
  });
  it('falls back to the nested model, saying so, above the crossed model’s trial limit', () => {
    const items = cases[0].items;
    const o = poolSiteLevels(items, { method: 'reml', confidence: 0.95, threshold: 0, crossedWithYear: true, crossedTrialLimit: 5 });
    expect(o.levels).toBe('site-and-trial');
    expect(o.notes.join(' ')).toMatch(/not fitted above 5 trials/);
    expect(o.siteTau2).toBe(ours.get('a')!.siteTau2);
  });
});
