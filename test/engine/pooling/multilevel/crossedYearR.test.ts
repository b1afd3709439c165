// Site x year crossed pooling (site, year and trial-within-site tau²) against a dense likelihood
// written out in R (V = diag(v + trial tau²) + site tau² [same site] + year tau² [same year],
// solve and determinant on the full matrix), maximised with optim (L-BFGS-B, several starts),
// and profile intervals by optimize/optim + uniroot. Data simulated here: 12 sites over 6 years
// with gaps. Tolerances: our likelihood equals R's at our estimates to 1e-10 relative and is
// never below R's maximum (1e-9); tau² within 1e-5 relative of R's optimum (absolute 1e-6);
// mean and SE 1e-6; with year tau² = 0 the crossed likelihood equals the nested one to 1e-12.
import { beforeAll, describe, expect, it } from 'vitest';
import { crossedLogLik, type CrossedGroup } from '../../../../src/engine/pooling/multilevel/crossedYearLikelihood.js';
import { fitCrossedYear, type CrossedEstimates } from '../../../../src/engine/pooling/multilevel/fitCrossedYear.js';
import { siteTrialLogLik } from '../../../../src/engine/pooling/multilevel/siteTrialLikelihood.js';
import { chisqQuantile } from '../../../../src/engine/stats/distributions.js';
import { mulberry32, normalSampler } from '../../../../src/engine/stats/random.js';
import { relDiff, runR, type RRun } from '../../../support/rscript.js';

const YEARS = 6;
function simulate(seed: number): { groups: CrossedGroup[]; csv: string } {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const yearEff = Array.from({ length: YEARS }, () => 0.5 * z());
  const groups: CrossedGroup[] = [];
  const lines = ['site,year,y,v'];
  for (let s = 0; s < 12; s++) {
    const a = 0.6 * z();
    const y: number[] = [];
    const v: number[] = [];
    const yi: number[] = [];
    for (let t = 0; t < YEARS; t++) {
      if (u() < 0.35) continue;
      const se = 0.2 + 0.6 * u();
      const val = 1 + a + yearEff[t] + 0.3 * z() + se * z();
      y.push(val); v.push(se * se); yi.push(t);
      lines.push(`S${s},${t},${val.toPrecision(17)},${(se * se).toPrecision(17)}`);
    }
    if (y.length > 0) groups.push({ site: `S${s}`, trials: y.map((_, j) => `S${s}-${j}`), y: Float64Array.from(y), v: Float64Array.from(v), yearIndex: Int32Array.from(yi) });
  }
  return { groups, csv: lines.join('\n') };
}

const data = simulate(77);
let fit: CrossedEstimates;
let r: RRun;

beforeAll(() => {
  fit = fitCrossedYear(data.groups, YEARS, 'reml', chisqQuantile(0.95, 1));
  r = runR(String.raw`
d <- read.csv("d.csv")
ll <- function(p) { n <- nrow(d); V <- diag(d$v + p[2], n) + p[1] * outer(d$site, d$site, "==") + p[3] * outer(d$year, d$year, "==")
  Vi <- solve(V); c <- sum(Vi); mu <- sum(Vi %*% d$y) / c; r <- d$y - mu
  -0.5 * ((n - 1) * log(2 * pi) + as.numeric(determinant(V)$modulus) + as.numeric(t(r) %*% Vi %*% r) + log(c)) }
up <- 10 * (var(d$y) + max(d$v)); best <- NULL
for (st in list(c(.3,.3,.3), c(.6,.1,.1), c(.1,.6,.1), c(.1,.1,.6))) {
  o <- optim(st * var(d$y), function(p) -ll(p), method = "L-BFGS-B", lower = c(0,0,0), upper = rep(up, 3), control = list(factr = 1, pgtol = 0, maxit = 5000, parscale = rep(0.1, 3)))
  if (is.null(best) || o$value < best$value) best <- o }
p <- best$par; emit("site", p[1]); emit("trial", p[2]); emit("year", p[3]); emit("ll", -best$value)
ours <- as.numeric(readLines("ours.txt")); emit("ll_ours", ll(ours[1:3]))
n <- nrow(d); V <- diag(d$v + ours[2], n) + ours[1] * outer(d$site, d$site, "==") + ours[3] * outer(d$year, d$year, "=="); Vi <- solve(V)
emit("mu", sum(Vi %*% d$y) / sum(Vi)); emit("se", sqrt(1 / sum(Vi)))
# profile upper end for year tau² (the least determined with six years)
cut <- ll(ours[1:3]) - qchisq(0.95, 1) / 2
prof <- function(y2) { o <- optim(ours[1:2], function(q) -ll(c(q[1], q[2], y2)), method = "L-BFGS-B", lower = c(0, 0), upper = c(up, up), control = list(factr = 1, pgtol = 0)); -o$value - cut }
hi <- 2 * ours[3]; while (prof(hi) > 0) hi <- 2 * hi
emit("year_upper", uniroot(prof, c(ours[3], hi), tol = 1e-12)$root)
`, { 'd.csv': data.csv, 'ours.txt': `${fit.siteTau2}\n${fit.trialTau2}\n${fit.yearTau2}` });
}, 600_000);

const close = (a: number, b: number, rel: number, abs = 0) => expect(Math.abs(a - b)).toBeLessThanOrEqual(Math.max(rel * Math.abs(b), abs));

describe('site x year crossed pooling', () => {
  it('with year tau² = 0 the bordered likelihood is the nested one', () => {
    for (const [s, t] of [[0.3, 0.2], [0, 0.5], [1.2, 0]])
      for (const kind of ['reml', 'ml'] as const) expect(relDiff(crossedLogLik(data.groups, YEARS, s, t, 0, kind).logLik, siteTrialLogLik(data.groups, s, t, kind).logLik)).toBeLessThan(1e-12);
  });
  it('matches the dense R likelihood and its optimum', () => {
    expect(fit.converged).toBe(true);
    expect(relDiff(fit.logLik, r.values.ll_ours)).toBeLessThan(1e-10);
    expect(fit.logLik).toBeGreaterThanOrEqual(r.values.ll - 1e-9 * Math.abs(r.values.ll));
    close(fit.siteTau2, r.values.site, 1e-5, 1e-6);
    close(fit.trialTau2, r.values.trial, 1e-5, 1e-6);
    close(fit.yearTau2, r.values.year, 1e-5, 1e-6);
    close(fit.mu, r.values.mu, 1e-9);
    close(Math.sqrt(fit.muVariance), r.values.se, 1e-9);
  });
  it('profile interval for year tau² matches R', () => {
    close(fit.intervals!.year.upper!, r.values.year_upper, 1e-4);
    expect(fit.intervals!.year.lower!).toBeLessThanOrEqual(fit.yearTau2);
  });
});
