// The bootstrap new-site prediction of the site-and-trial pooling against the same algorithm
// written in base R (live):
// 1. Same draws: the data sets and new-site effects our simulation drew are refitted in R (nested
//    optimize on the written-out REML likelihood) and studentised there; the pivots agree to 1e-4
//    relative (our refits search to 1e-6 relative in each tau², R's to 1e-10).
// 2. Own draws: R simulates from the fitted model with its own generator (set.seed), refits by
//    L-BFGS-B and forms the interval and probabilities; they agree with ours to Monte Carlo error
//    (4 combined Monte Carlo SEs: quantile SE from R's pivot density, probability SE binomial).
//    With seven sites the pivot's tails are heavy, so this check is loose (about ±1.2 on the lower
//    end at 1000 draws; on the run that set it: ours -0.974 to 3.045, R -0.998 to 3.163, plug-in t
//    -0.695 to 2.995); the same-draws check above is the sharp one.
import { beforeAll, describe, expect, it } from 'vitest';
import { bootstrapPivotPrediction } from '../../../../src/engine/pooling/multilevel/bootstrapPivotPrediction.js';
import { nestedPivotModel } from '../../../../src/engine/pooling/multilevel/pivotModels.js';
import { groupBySite, poolSiteLevels } from '../../../../src/engine/pooling/multilevel/poolSiteLevels.js';
import type { SiteLevelItem, SiteLevelPooling } from '../../../../src/engine/pooling/multilevel/types.js';
import { mulberry32, normalSampler } from '../../../../src/engine/stats/random.js';
import { sharedPivotDraws } from './support/sharedPivots.js';
import { runR, type RRun } from '../../../support/rscript.js';

const DRAWS = 1000;
const SHARED = 40;

function network(): SiteLevelItem[] {
  const u = mulberry32(77);
  const z = normalSampler(u);
  const items: SiteLevelItem[] = [];
  for (let s = 0; s < 7; s++) {
    const a = 0.5 * z();
    const n = 1 + Math.floor(u() * 4);
    for (let j = 0; j < n; j++) {
      const se = 0.2 + 0.5 * u();
      items.push({ site: `S${s + 1}`, trial: `S${s + 1}-${2018 + j}`, se, estimate: 1 + a + 0.4 * z() + se * z() });
    }
  }
  return items;
}

const R_SCRIPT = String.raw`
d <- read.csv("net.csv", stringsAsFactors = FALSE)
ll <- function(s2, t2, y) {
  n <- length(y); V <- diag(d$v + t2, n) + s2 * outer(d$site, d$site, "=="); Vi <- solve(V)
  c <- sum(Vi); mu <- sum(Vi %*% y) / c; r <- y - mu
  -0.5 * ((n - 1) * log(2 * pi) + as.numeric(determinant(V)$modulus) + as.numeric(t(r) %*% Vi %*% r) + log(c))
}
gls <- function(s2, t2, y) { n <- length(y); Vi <- solve(diag(d$v + t2, n) + s2 * outer(d$site, d$site, "==")); c(sum(Vi %*% y) / sum(Vi), 1 / sum(Vi)) }
up <- 10 * (var(d$y) + max(d$v))
fit_exact <- function(y) {
  inner <- function(t2) { o <- optimize(function(s) ll(s, t2, y), c(0, up), maximum = TRUE, tol = 1e-10)
    z <- ll(0, t2, y); if (z >= o$objective) c(0, z) else c(o$maximum, o$objective) }
  ot <- optimize(function(t) inner(t)[2], c(0, up), maximum = TRUE, tol = 1e-10)
  t2 <- if (inner(0)[2] >= ot$objective) 0 else ot$maximum; s2 <- inner(t2)[1]
  m <- gls(s2, t2, y); c(m[1], m[2], s2 + t2)
}
fit_quick <- function(y) {
  best <- NULL
  for (st in list(c(0.5, 0.5) * var(y), c(0.05, 0.05) * var(y))) {
    o <- optim(st, function(p) -ll(p[1], p[2], y), method = "L-BFGS-B", lower = c(0, 0), upper = c(up, up))
    if (is.null(best) || o$value < best$value) best <- o
  }
  m <- gls(best$par[1], best$par[2], y); c(m[1], m[2], sum(best$par))
}
# 1. same draws
sims <- as.matrix(read.csv("shared.csv", header = FALSE))
piv <- apply(sims, 1, function(row) { f <- fit_exact(row[-1]); (row[1] - f[1]) / sqrt(f[2] + f[3]) })
emit("shared_pivot", piv)
# 2. own draws: the fitted model at our estimates
ours <- as.numeric(readLines("fitted.txt")); mu <- ours[1]; s2 <- ours[2]; t2 <- ours[3]; muv <- ours[4]; thr <- ours[5]
set.seed(2024)
sites <- unique(d$site); B <- as.integer(readLines("draws.txt"))
q <- numeric(B)
for (b in 1:B) {
  a <- rnorm(length(sites), 0, sqrt(s2))[match(d$site, sites)]
  y <- mu + a + rnorm(nrow(d), 0, sqrt(t2)) + rnorm(nrow(d), 0, sqrt(d$v))
  new <- mu + rnorm(1, 0, sqrt(s2 + t2))
  f <- fit_quick(y); q[b] <- (new - f[1]) / sqrt(f[2] + f[3])
}
scale <- sqrt(muv + s2 + t2)
emit("lower", mu + scale * quantile(q, 0.025, type = 7)); emit("upper", mu + scale * quantile(q, 0.975, type = 7))
dens <- function(p) 0.02 / diff(quantile(q, c(p - 0.01, p + 0.01), type = 7))
emit("lower_se", scale * sqrt(0.025 * 0.975 / B) / dens(0.025)); emit("upper_se", scale * sqrt(0.025 * 0.975 / B) / dens(0.975))
emit("p_positive", mean(q > (0 - mu) / scale)); emit("p_threshold", mean(q > (thr - mu) / scale))
`;

const items = network();
const threshold = 0.6;
let ours: SiteLevelPooling;
let sharedPivots: number[];
let r: RRun;

beforeAll(() => {
  ours = poolSiteLevels(items, { method: 'reml', confidence: 0.95, threshold, predictionDraws: DRAWS, predictionSeed: 9 });
  const groups = groupBySite(items);
  const fitted = { mu: ours.estimate as number, siteTau2: ours.siteTau2 as number, trialTau2: ours.trialTau2 as number };
  // the same-draws part: record what our simulation draws and what our refits make of it
  const model = nestedPivotModel(groups, fitted, 'reml');
  const shared = sharedPivotDraws(model, groups.map((g) => g.y.length), SHARED);
  sharedPivots = shared.pivots;
  // groupBySite keeps the order of first appearance, as the CSV rows do
  const flat = groups.flatMap((g) => g.trials.map((t, j) => ({ site: g.site, trial: t, y: g.y[j], v: g.v[j] })));
  const csv = ['site,trial,y,v', ...flat.map((t) => `${t.site},${t.trial},${t.y.toPrecision(17)},${t.v.toPrecision(17)}`)].join('\n');
  const fittedTxt = [fitted.mu, fitted.siteTau2, fitted.trialTau2, (ours.se as number) ** 2, threshold].map((x) => x.toPrecision(17)).join('\n');
  r = runR(R_SCRIPT, { 'net.csv': csv, 'shared.csv': shared.rows.join('\n'), 'fitted.txt': fittedTxt, 'draws.txt': String(DRAWS) });
}, 600_000);

describe('bootstrap new-site prediction (site-and-trial) against base R', () => {
  it('studentises the same simulated data sets to the same pivots (1e-4 relative)', () => {
    for (let b = 0; b < SHARED; b++) {
      const theirs = r.values[`shared_pivot[${b + 1}]`];
      expect(Math.abs(sharedPivots[b] - theirs)).toBeLessThanOrEqual(1e-4 * Math.max(1, Math.abs(theirs)));
    }
  });

  it('gives the interval and probabilities R gets with its own draws, within 4 Monte Carlo SEs', () => {
    const p = ours.newSitePrediction!;
    expect(p.method).toBe('bootstrap-pivot');
    expect(p.draws).toBe(DRAWS);
    const tolLower = 4 * Math.SQRT2 * r.values.lower_se;
    const tolUpper = 4 * Math.SQRT2 * r.values.upper_se;
    expect(Math.abs((ours.newSiteLower as number) - r.values.lower)).toBeLessThanOrEqual(tolLower);
    expect(Math.abs((ours.newSiteUpper as number) - r.values.upper)).toBeLessThanOrEqual(tolUpper);
    const pTol = (x: number) => 4 * Math.sqrt((2 * Math.max(x, 0.01) * (1 - Math.min(x, 0.99))) / DRAWS);
    expect(Math.abs((ours.newSiteProbPositive as number) - r.values.p_positive)).toBeLessThanOrEqual(pTol(r.values.p_positive));
    expect(Math.abs((ours.newSiteProbAboveThreshold as number) - r.values.p_threshold)).toBeLessThanOrEqual(pTol(r.values.p_threshold));
  });

  it('is deterministic given the seed and says which method made it', () => {
    const again = poolSiteLevels(items, { method: 'reml', confidence: 0.95, threshold, predictionDraws: DRAWS, predictionSeed: 9 });
    expect(again.newSiteLower).toBe(ours.newSiteLower);
    expect(again.newSiteUpper).toBe(ours.newSiteUpper);
    const plug = poolSiteLevels(items, { method: 'reml', confidence: 0.95, threshold, prediction: 'plug-in-t' });
    expect(plug.newSitePrediction?.method).toBe('plug-in-t');
    expect(plug.newSiteLower).toBe(ours.newSitePrediction?.plugInT.lower);
  });

  it('direct call: a failed refit is counted and left out', () => {
    let calls = 0;
    const model = {
      simulate: (normal: () => number, y: Float64Array[]) => { y[0][0] = normal(); return normal(); },
      refit: () => (++calls % 2 === 0 ? null : { mu: 0, muVariance: 1, between: 0 }),
    };
    const b = bootstrapPivotPrediction(model, { mu: 0, muVariance: 1, between: 0 }, [1], { confidence: 0.95, thresholds: [0], draws: 200, seed: 1 });
    expect(b.failed).toBe(100);
    expect(b.draws).toBe(100);
  });
});
