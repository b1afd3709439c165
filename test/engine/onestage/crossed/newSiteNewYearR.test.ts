// The crossed one-stage model's bootstrap new-site-in-a-new-year prediction against the same
// algorithm written in base R (live), on a simulated plot-level network (8 sites over 4 years with
// gaps, 4 treatments in 3 blocks, some plots missing):
// 0. each trial's own estimate of the contrast and its SE: R's lm(y ~ block + treatment) per trial
//    (1e-9 relative);
// 1. same draws: data sets of own estimates and new-site effects drawn by our simulation are
//    refitted in R (the crossed REML likelihood written out densely, maximised by L-BFGS-B from
//    several starts) and studentised there; the pivots agree to 1e-3 relative (our refits are
//    local Newton searches to about 1e-6 in each variance);
// 2. own draws: R draws its own data sets at the one-stage variance parts (set.seed), with the
//    SEs of its own lm fits, refits them and forms the interval (centre and scale from the
//    one-stage fit, read from ours: the fit itself is checked against lme4 in fitCrossed.test.ts)
//    and probabilities; they agree with ours within 4 combined Monte Carlo SEs (quantile SE from
//    R's pivot density, binomial SE for the probabilities). On the run that set it (600 draws
//    each): ours 0.038 to 2.391, P(> 0) 0.975, P(> 0.9) 0.815; R 0.101 to 2.301 (Monte Carlo SEs
//    0.10 and 0.11), 0.983, 0.797; plug-in t 0.226 to 2.398; same-draws pivots within 2.6e-5.
//    About two minutes, most of it R's refits.
import { beforeAll, describe, expect, it } from 'vitest';
import { resolveContrast } from '../../../../src/engine/contrasts/resolve.js';
import { crossedData } from '../../../../src/engine/onestage/crossed/crossedData.js';
import { fitCrossed } from '../../../../src/engine/onestage/crossed/fitCrossed.js';
import { crossedGroups, oneStagePivotModel, type OwnTrialEstimate } from '../../../../src/engine/onestage/crossed/newSiteNewYearBootstrap.js';
import { withSiteYearNewSite } from '../../../../src/engine/onestage/crossed/siteYearNewSite.js';
import { CROSSED_TERMS } from '../../../../src/engine/onestage/crossed/terms.js';
import { trialOwnContrasts } from '../../../../src/engine/onestage/crossed/trialOwnContrasts.js';
import { typicalSamplingVariance } from '../../../../src/engine/pooling/multilevel/poolSiteLevels.js';
import { sharedPivotDraws } from '../../pooling/multilevel/support/sharedPivots.js';
import { runR, type RRun } from '../../../support/rscript.js';
import { simulateCrossed } from './support/simulateCrossed.js';

const DRAWS = 600;
const SHARED = 30;
const threshold = 0.9;
const random = [...CROSSED_TERMS];
const sim = simulateCrossed({ seed: 31, sites: 8, years: 4, treatments: 4, blocks: 3, missing: 0.04, sd: { 'treatment-by-site': 0.3, 'treatment-by-year': 0.2, 'treatment-by-trial': 0.25 } });
const contrast = resolveContrast({ name: 'T2_vs_CTL', coefficients: { CTL: -1, T2: 1 }, divisor: 1 }, sim.network.treatments);

const R_SCRIPT = String.raw`
p <- read.csv("plots.csv", stringsAsFactors = FALSE)
p$block <- factor(p$block); p$trt <- factor(p$trt, levels = c("CTL", "T1", "T2", "T3"))
# 0. each trial's own estimate: blocks and treatments fitted to that trial alone
envs <- unique(p$env)
own <- do.call(rbind, lapply(envs, function(e) {
  d <- p[p$env == e, ]; d$trt <- droplevels(d$trt); d$block <- droplevels(d$block)
  m <- lm(y ~ block + trt, data = d); b <- coef(m); V <- vcov(m)
  data.frame(env = e, site = d$site[1], year = d$year[1], est = unname(b["trtT2"]), se = sqrt(V["trtT2", "trtT2"]))
}))
emit("own_est", own$est); emit("own_se", own$se)
ll <- function(q, y, d) { n <- length(y); V <- diag(d$v + q[2], n) + q[1] * outer(d$site, d$site, "==") + q[3] * outer(d$year, d$year, "==")
  Vi <- solve(V); c <- sum(Vi); mu <- sum(Vi %*% y) / c; r <- y - mu
  -0.5 * ((n - 1) * log(2 * pi) + as.numeric(determinant(V)$modulus) + as.numeric(t(r) %*% Vi %*% r) + log(c)) }
fit <- function(y, d, start, starts = list(start, c(.3, .3, .3) * var(y), c(.05, .05, .05) * var(y))) {
  up <- 10 * (var(y) + max(d$v)); best <- NULL
  for (st in starts) {
    o <- optim(pmax(st, 1e-6), function(q) -ll(q, y, d), method = "L-BFGS-B", lower = c(0, 0, 0), upper = rep(up, 3),
               control = list(factr = 10, pgtol = 0, maxit = 2000, parscale = rep(max(mean(d$v), 1e-3), 3)))
    if (is.null(best) || o$value < best$value) best <- o }
  q <- best$par; n <- length(y)
  Vi <- solve(diag(d$v + q[2], n) + q[1] * outer(d$site, d$site, "==") + q[3] * outer(d$year, d$year, "=="))
  c(sum(Vi %*% y) / sum(Vi), 1 / sum(Vi), sum(q)) }
ours <- as.numeric(readLines("fitted.txt")); est <- ours[1]; se <- ours[2]; s2 <- ours[3]; y2 <- ours[4]; t2 <- ours[5]; thr <- ours[6]
start <- c(s2, t2, y2)
# 1. same draws (our order of trials: ours.csv)
d1 <- read.csv("ours.csv")
sims <- as.matrix(read.csv("shared.csv", header = FALSE))
piv <- apply(sims, 1, function(row) { f <- fit(row[-1], d1, start); (row[1] - f[1]) / sqrt(f[2] + f[3]) })
emit("shared_pivot", piv)
# 2. own draws from the one-stage parts, with R's own estimates' SEs
d2 <- data.frame(site = as.integer(factor(own$site)), year = as.integer(factor(own$year)), v = own$se^2)
set.seed(2025)
B <- as.integer(readLines("draws.txt")); q <- numeric(B); ns <- max(d2$site); ny <- max(d2$year)
for (b in 1:B) {
  y <- est + rnorm(ns, 0, sqrt(s2))[d2$site] + rnorm(ny, 0, sqrt(y2))[d2$year] + rnorm(nrow(d2), 0, sqrt(t2)) + rnorm(nrow(d2), 0, sqrt(d2$v))
  new <- est + rnorm(1, 0, sqrt(s2 + y2 + t2))
  f <- fit(y, d2, start, list(start, c(.3, .3, .3) * var(y))); q[b] <- (new - f[1]) / sqrt(f[2] + f[3]) }
scale <- sqrt(se^2 + s2 + y2 + t2)
emit("lower", est + scale * quantile(q, 0.025, type = 7)); emit("upper", est + scale * quantile(q, 0.975, type = 7))
dens <- function(pr) 0.02 / diff(quantile(q, c(pr - 0.01, pr + 0.01), type = 7))
emit("lower_se", scale * sqrt(0.025 * 0.975 / B) / dens(0.025)); emit("upper_se", scale * sqrt(0.025 * 0.975 / B) / dens(0.975))
emit("p_positive", mean(q > (0 - est) / scale)); emit("p_threshold", mean(q > (thr - est) / scale))
`;

let r: RRun;
let ownOurs: (OwnTrialEstimate | null)[];
let prediction: NonNullable<ReturnType<typeof withSiteYearNewSite>['siteYearView']['contrasts'][number]['newSiteNewYear']>;
let sharedPivots: number[];

beforeAll(() => {
  const fit = fitCrossed(sim.network, [contrast], { random, yearAsFixed: false, df: 'satterthwaite', confidence: 0.95, lrt: false, profile: false });
  const view = withSiteYearNewSite(fit, sim.network, [contrast], { random, yearAsFixed: false, method: 'bootstrap-tau2', confidence: 0.95, threshold, draws: DRAWS, seed: 41 }).siteYearView;
  const c = view.contrasts[0];
  prediction = c.newSiteNewYear!;
  const est = fit.contrasts[0].estimate as number;
  const se = fit.contrasts[0].se as number;
  // the own estimates as the engine makes them, and the groups its bootstrap draws from
  const d = crossedData(sim.network, random, false);
  const j = (code: string) => d.treatments.indexOf(code);
  const l = new Float64Array(d.treatments.length);
  l[j('CTL')] = -1;
  l[j('T2')] = 1;
  ownOurs = trialOwnContrasts(d, [l]).map((row, t) => {
    const e = row[0];
    const tr = d.trials[t];
    return e ? { trial: tr.trial, site: d.sites[tr.site], year: d.years[tr.year], estimate: e.estimate, se: e.se } : null;
  });
  const groups = crossedGroups(ownOurs.filter((x): x is OwnTrialEstimate => x !== null));
  const parts = { site: c.siteVariance, year: c.yearVariance, siteYear: c.siteYearVariance };
  const model = oneStagePivotModel(groups.list, groups.years, est, parts, typicalSamplingVariance(groups.list) ?? 1);
  const shared = sharedPivotDraws(model, groups.list.map((g) => g.y.length), SHARED);
  sharedPivots = shared.pivots;
  const flat = groups.list.flatMap((g, s) => Array.from(g.v, (v, k) => `${s},${g.yearIndex[k]},${v.toPrecision(17)}`));
  const fitted = [est, se, parts.site, parts.year, parts.siteYear, threshold].map((x) => x.toPrecision(17)).join('\n');
  r = runR(R_SCRIPT, { 'plots.csv': sim.csv, 'ours.csv': ['site,year,v', ...flat].join('\n'), 'shared.csv': shared.rows.join('\n'), 'fitted.txt': fitted, 'draws.txt': String(DRAWS) });
}, 600_000);

describe('new site in a new year (crossed one-stage) against base R', () => {
  it("each trial's own estimate and SE are R's lm per trial (1e-9 relative)", () => {
    const est = r.values;
    let k = 0;
    for (const e of ownOurs) {
      k++;
      expect(e).not.toBeNull();
      expect(Math.abs(e!.estimate - est[`own_est[${k}]`])).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(est[`own_est[${k}]`])));
      expect(Math.abs(e!.se - est[`own_se[${k}]`])).toBeLessThanOrEqual(1e-9 * est[`own_se[${k}]`]);
    }
    expect(k).toBe(sim.network.trials.length);
  });

  it('studentises the same simulated data sets to the same pivots (1e-3 relative)', () => {
    for (let b = 0; b < SHARED; b++) {
      const theirs = r.values[`shared_pivot[${b + 1}]`];
      expect(Math.abs(sharedPivots[b] - theirs)).toBeLessThanOrEqual(1e-3 * Math.max(1, Math.abs(theirs)));
    }
  });

  it('gives the interval and probabilities R gets with its own draws, within 4 Monte Carlo SEs', () => {
    expect(prediction.method).toBe('bootstrap-pivot');
    expect(prediction.draws).toBe(DRAWS);
    expect(Math.abs(prediction.lower - r.values.lower)).toBeLessThanOrEqual(4 * Math.SQRT2 * r.values.lower_se);
    expect(Math.abs(prediction.upper - r.values.upper)).toBeLessThanOrEqual(4 * Math.SQRT2 * r.values.upper_se);
    const pTol = (x: number) => 4 * Math.sqrt((2 * Math.max(x, 0.01) * (1 - Math.min(x, 0.99))) / DRAWS);
    expect(Math.abs((prediction.probPositive as number) - r.values.p_positive)).toBeLessThanOrEqual(pTol(r.values.p_positive));
    expect(Math.abs((prediction.probAboveThreshold as number) - r.values.p_threshold)).toBeLessThanOrEqual(pTol(r.values.p_threshold));
  });
});
