// `manyfield analyze --data F --spec S --json` with twoStage.levels "site-and-trial" on an
// unbalanced network generated here (sites x years with gaps, missing plots), checked end to end
// against R on the same file: each trial's contrast by lm(yield ~ block + trt) (stats), then the
// nested REML likelihood written out densely and maximised (optim L-BFGS-B polished by nested
// optimize), and the ML fit by nlme::lme(random = ~ 1 | site/trial, varFixed(~ v),
// lmeControl(sigma = 1)). Tolerances: per-trial estimates and SEs 1e-9 relative; tau² 1e-5
// relative (absolute 1e-6); mean and SE 1e-6 relative (1e-5 against nlme); logLik 1e-8 relative.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { manyfield, tempDir } from '../support/cli.js';
import { runR, type RRun } from '../support/rscript.js';
import { mulberry32, normalSampler } from '../../src/engine/stats/random.js';

interface SiteLevels { estimate: number; se: number; siteTau2: number; trialTau2: number; logLik: number; sites: number; trials: number }

function networkCsv(seed: number): string {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const lines = ['site,year,block,trt,yield'];
  for (let s = 1; s <= 16; s++) {
    const siteGain = 0.6 * z();
    for (let year = 2016; year <= 2023; year++) {
      if (u() < 0.45) continue; // not every site every year
      const gain = 0.9 + siteGain + 0.35 * z();
      const level = 6 + z();
      for (let b = 1; b <= 4; b++)
        for (const t of ['CTL', 'T']) {
          const missing = u() < 0.04 && !(b === 1); // some plots missing, never a whole treatment
          lines.push(`R${s},${year},${b},${t},${missing ? '' : (level + 0.1 * b + (t === 'T' ? gain : 0) + 0.4 * z()).toFixed(4)}`);
        }
    }
  }
  return `${lines.join('\n')}\n`;
}

const R_SCRIPT = String.raw`
suppressMessages(library(nlme))
p <- read.csv("net.csv"); p$block <- factor(p$block); p$trt <- factor(p$trt, levels = c("CTL", "T"))
keys <- unique(p[, c("site", "year")]); keys$trial <- paste0(keys$site, "-", keys$year)
y <- v <- numeric(nrow(keys))
for (i in seq_len(nrow(keys))) {
  d <- p[p$site == keys$site[i] & p$year == keys$year[i], ]
  f <- summary(lm(yield ~ block + trt, data = d)); y[i] <- f$coefficients["trtT", 1]; v[i] <- f$coefficients["trtT", 2]^2
}
d <- data.frame(site = keys$site, trial = keys$trial, y = y, v = v)
emit("trial_y", d$y); emit("trial_se", sqrt(d$v))
dense_ll <- function(s2, t2, reml) {
  n <- nrow(d); V <- diag(d$v + t2, n) + s2 * outer(d$site, d$site, "=="); Vi <- solve(V)
  c <- sum(Vi); mu <- sum(Vi %*% d$y) / c; r <- d$y - mu
  -0.5 * ((n - reml) * log(2 * pi) + as.numeric(determinant(V)$modulus) + as.numeric(t(r) %*% Vi %*% r) + if (reml) log(c) else 0)
}
for (reml in c(1, 0)) {
  tag <- if (reml) "reml" else "ml"
  up <- 10 * (var(d$y) + max(d$v))
  o <- optim(c(0.5, 0.5) * var(d$y), function(q) -dense_ll(q[1], q[2], reml), method = "L-BFGS-B", lower = c(0, 0), upper = c(up, up), control = list(factr = 1, pgtol = 0))
  inner <- function(t2) { oo <- optimize(function(s) dense_ll(s, t2, reml), c(0, up), maximum = TRUE, tol = 1e-13); z0 <- dense_ll(0, t2, reml); if (z0 >= oo$objective) c(0, z0) else c(oo$maximum, oo$objective) }
  ot <- optimize(function(t) inner(t)[2], c(0, up), maximum = TRUE, tol = 1e-13)
  t2 <- ot$maximum; s2 <- inner(t2)[1]; par <- if (dense_ll(s2, t2, reml) > -o$value) c(s2, t2) else o$par
  n <- nrow(d); V <- diag(d$v + par[2], n) + par[1] * outer(d$site, d$site, "=="); Vi <- solve(V)
  emit(paste0(tag, "_site"), par[1]); emit(paste0(tag, "_trial"), par[2]); emit(paste0(tag, "_ll"), dense_ll(par[1], par[2], reml))
  emit(paste0(tag, "_mu"), sum(Vi %*% d$y) / sum(Vi)); emit(paste0(tag, "_se"), sqrt(1 / sum(Vi)))
}
fit <- lme(y ~ 1, random = ~ 1 | site/trial, data = d, weights = varFixed(~ v), method = "ML", control = lmeControl(sigma = 1, msMaxIter = 1000, msTol = 1e-14, tolerance = 1e-14, returnObject = TRUE))
vc <- as.numeric(VarCorr(fit)[c(2, 4), "Variance"])
emit("nlme_site", vc[1]); emit("nlme_trial", vc[2]); emit("nlme_mu", fixef(fit)); emit("nlme_se", sqrt(vcov(fit)[1, 1])); emit("nlme_ll", logLik(fit))
`;

const runs: Record<string, { report: { twoStage: { trials: { trial: string; contrasts: { name: string; estimate: number; se: number }[] }[]; pooled: { siteLevels: SiteLevels }[] } } }> = {};
let r: RRun;

beforeAll(() => {
  const dir = tempDir();
  const csv = networkCsv(20260);
  writeFileSync(join(dir, 'net.csv'), csv);
  for (const tau2 of ['reml', 'ml']) {
    const spec = { trait: 'yield', columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield' }, control: 'CTL', contrasts: [{ name: 'gain', coefficients: { CTL: -1, T: 1 } }], oneStage: null, twoStage: { levels: 'site-and-trial', tau2, prediction: 'plug-in-t' } };
    writeFileSync(join(dir, `${tau2}.json`), JSON.stringify(spec));
    const run = manyfield(['analyze', '--data', join(dir, 'net.csv'), '--spec', join(dir, `${tau2}.json`), '--json']);
    if (run.status !== 0) throw new Error(run.stderr);
    runs[tau2] = { report: JSON.parse(run.stdout) };
  }
  r = runR(R_SCRIPT, { 'net.csv': csv });
}, 600_000);

const close = (a: number, b: number, rel: number, abs = 0) => expect(Math.abs(a - b)).toBeLessThanOrEqual(Math.max(rel * Math.abs(b), abs));

describe('analyze --data with sites nested in years, against R on the same file', () => {
  it('per-trial contrasts match lm in R', () => {
    const trials = runs.reml.report.twoStage.trials;
    trials.forEach((t, i) => {
      const c = t.contrasts.find((x) => x.name === 'gain')!;
      close(c.estimate, r.values[`trial_y[${i + 1}]`], 1e-9, 1e-12);
      close(c.se, r.values[`trial_se[${i + 1}]`], 1e-9);
    });
  });
  it.each(['reml', 'ml'])('%s: site and trial tau², mean, SE and logLik match the written-out likelihood', (tag) => {
    const s = runs[tag].report.twoStage.pooled[0].siteLevels;
    close(s.siteTau2, r.values[`${tag}_site`], 1e-5, 1e-6);
    close(s.trialTau2, r.values[`${tag}_trial`], 1e-5, 1e-6);
    close(s.estimate, r.values[`${tag}_mu`], 1e-6);
    close(s.se, r.values[`${tag}_se`], 1e-6);
    close(s.logLik, r.values[`${tag}_ll`], 1e-8);
  });
  it('ML fit matches nlme lme (varFixed, sigma = 1)', () => {
    const s = runs.ml.report.twoStage.pooled[0].siteLevels;
    close(s.siteTau2, r.values.nlme_site, 1e-4, 1e-5);
    close(s.trialTau2, r.values.nlme_trial, 1e-4, 1e-5);
    close(s.estimate, r.values.nlme_mu, 1e-5);
    close(s.se, r.values.nlme_se, 1e-5);
    close(s.logLik, r.values.nlme_ll, 1e-7);
  });
});
