// Live cross-check of the trial engine against R's lm / anova (Debian r-base-core, stats
// package) on trials generated at random here (fixed seeds): every design, balanced and
// with missing plots. R computes the adjusted means by hand from the model matrix of a
// balanced grid of nuisance levels (equal weight per level) and vcov(lm).
// Tolerance: 1e-8 relative (absolute floor stated per quantity) unless stated otherwise.
import { describe, it, beforeAll, expect } from 'vitest';
import { analyzeTrial } from '../../../src/engine/trial/analyzeTrial.js';
import type { TrialAnalysis, EstimableContrast } from '../../../src/engine/trial/types.js';
import type { ResolvedContrast } from '../../../src/engine/contrasts/resolve.js';
import { mulberry32 } from '../../../src/engine/stats/random.js';
import type { TrialDesign } from '../../../src/engine/types.js';
import { runR, rVector, type RRun } from '../../support/rscript.js';
import { simulateTrial, plotsCsv, type SimulatedTrial } from './simulate.js';
import { expectClose } from './close.js';

const REL = 1e-8;

interface Scenario {
  readonly key: string;
  readonly design: TrialDesign;
  readonly sim: SimulatedTrial;
  readonly contrasts: ResolvedContrast[];
  readonly result: TrialAnalysis;
  readonly holm: TrialAnalysis;
}

const specs: [string, TrialDesign, number, number, number][] = [
  ['crbal', 'completely-randomised', 5, 4, 0],
  ['crmiss', 'completely-randomised', 5, 4, 3],
  ['rcbbal', 'randomised-blocks', 6, 4, 0],
  ['rcbmiss', 'randomised-blocks', 6, 4, 3],
  ['lsbal', 'latin-square', 5, 5, 0],
  ['lsmiss', 'latin-square', 5, 5, 2],
  ['rcbal', 'row-column', 6, 4, 0],
  ['rcmiss', 'row-column', 6, 4, 3],
];

function randomContrasts(codes: string[], seed: number): ResolvedContrast[] {
  const u = mulberry32(seed);
  return [1, 2, 3].map((k) => {
    const c = codes.map(() => Math.floor(u() * 7) - 3);
    const sum = c.reduce((s, v) => s + v, 0);
    c[0] -= sum;
    if (c.every((v): boolean => v === 0)) c.splice(0, 2, -1, 1);
    return { name: `c${k}`, kind: 'coefficients', coefficients: Object.fromEntries(codes.map((code, i) => [code, c[i]])), divisor: 1 + Math.floor(u() * 4), meaning: 'random' };
  });
}

const R_SCRIPT = String.raw`
analyse <- function(key, design) {
  d <- read.csv(paste0(key, ".csv"), stringsAsFactors = FALSE)
  cm <- as.matrix(read.csv(paste0(key, "_contrasts.csv")))
  lv <- colnames(cm)[-1]; div <- cm[, 1]; C <- cm[, -1, drop = FALSE]
  d$trt <- factor(d$trt, levels = lv)
  if (design == "completely-randomised") { fit <- lm(y ~ trt, d); grid <- expand.grid(trt = lv) }
  if (design == "randomised-blocks") { d$block <- factor(d$block); fit <- lm(y ~ block + trt, d); grid <- expand.grid(block = levels(d$block), trt = lv) }
  if (design %in% c("latin-square", "row-column")) {
    d$rowF <- factor(d$row); d$colF <- factor(d$col)
    fit <- lm(y ~ rowF + colF + trt, d)
    grid <- expand.grid(rowF = levels(d$rowF), colF = levels(d$colF), trt = lv)
  }
  p <- function(name) paste0(key, ".", name)
  a <- anova(fit)
  emit(p("anova.df"), a$Df); emit(p("anova.ss"), a[["Sum Sq"]])
  emit(p("anova.f"), a[["F value"]][-nrow(a)]); emit(p("anova.p"), a[["Pr(>F)"]][-nrow(a)])
  emit(p("sigma"), summary(fit)$sigma); emit(p("cv"), 100 * summary(fit)$sigma / mean(d$y))
  X <- model.matrix(delete.response(terms(fit)), grid)
  L <- t(sapply(lv, function(t) colMeans(X[grid$trt == t, , drop = FALSE])))
  b <- coef(fit); V <- vcov(fit)
  m <- as.vector(L %*% b); S <- L %*% V %*% t(L)
  emit(p("means"), m); emit(p("meanse"), sqrt(diag(S))); emit(p("cov"), as.vector(t(S)))
  dfe <- fit$df.residual; tq <- qt(0.975, dfe)
  ce <- as.vector(C %*% m) / div; cs <- sqrt(diag(C %*% S %*% t(C))) / div; ct <- ce / cs
  emit(p("c.est"), ce); emit(p("c.se"), cs); emit(p("c.p"), 2 * pt(-abs(ct), dfe)); emit(p("c.lo"), ce - tq * cs); emit(p("c.hi"), ce + tq * cs)
  k <- length(lv); pd <- c(); ps <- c()
  for (i in 1:(k - 1)) for (j in (i + 1):k) { e <- rep(0, k); e[i] <- 1; e[j] <- -1; pd <- c(pd, sum(e * m)); ps <- c(ps, sqrt(drop(t(e) %*% S %*% e))) }
  praw <- 2 * pt(-abs(pd / ps), dfe)
  emit(p("pw.diff"), pd); emit(p("pw.se"), ps); emit(p("pw.praw"), praw)
  emit(p("pw.tukey"), ptukey(sqrt(2) * abs(pd / ps), k, dfe, lower.tail = FALSE)); emit(p("pw.holm"), p.adjust(praw, "holm"))
  emit(p("lsd"), tq * mean(ps))
  rs <- rstandard(fit)
  emit(p("rstandard"), rs); emit(p("rstudent"), rstudent(fit)); emit(p("hat"), hatvalues(fit)); emit(p("cooks"), cooks.distance(fit))
  emit(p("nscore"), qqnorm(rs, plot.it = FALSE)$x)
  r <- resid(fit); z <- abs(r - ave(r, d$trt, FUN = median)); bf <- anova(lm(z ~ d$trt))
  emit(p("bf.f"), bf[["F value"]][1]); emit(p("bf.p"), bf[["Pr(>F)"]][1])
  if (design %in% c("completely-randomised", "randomised-blocks")) {
    sp <- function(extra) { an <- anova(fit, update(fit, as.formula(paste(". ~ . +", extra)))); c(an$Df[2], an$F[2], an[["Pr(>F)"]][2]) }
    emit(p("sp.joint"), sp("poly(row, 2) + poly(col, 2)")); emit(p("sp.rows"), sp("poly(row, 2)")); emit(p("sp.cols"), sp("poly(col, 2)"))
  }
  if (key == "rcbbal") {
    tk <- TukeyHSD(aov(y ~ block + trt, d), "trt")$trt
    emit(p("hsd.diff"), tk[, "diff"]); emit(p("hsd.lwr"), tk[, "lwr"]); emit(p("hsd.upr"), tk[, "upr"]); emit(p("hsd.p"), tk[, "p adj"])
  }
}
for (s in readLines("manifest.txt")) { f <- strsplit(s, " ")[[1]]; analyse(f[1], f[2]) }
`;

describe('per-trial analysis vs R lm/anova (live, random trials)', () => {
  const scenarios: Scenario[] = [];
  let r: RRun;
  beforeAll(() => {
    const files: Record<string, string> = {};
    specs.forEach(([key, design, t, reps, missing], i) => {
      const sim = simulateTrial(key, design, t, reps, missing, 1000 + i);
      const codes = sim.treatments.map((x) => x.code);
      const contrasts = randomContrasts(codes, 2000 + i);
      files[`${key}.csv`] = plotsCsv(sim.trial);
      files[`${key}_contrasts.csv`] = ['div,' + codes.join(','), ...contrasts.map((c) => [c.divisor, ...codes.map((k) => c.coefficients[k])].join(','))].join('\n') + '\n';
      const result = analyzeTrial(sim.trial, sim.treatments, contrasts, { transform: 'none', confidence: 0.95, pairwise: 'tukey' });
      const holm = analyzeTrial(sim.trial, sim.treatments, contrasts, { transform: 'none', confidence: 0.95, pairwise: 'holm' });
      scenarios.push({ key, design, sim, contrasts, result, holm });
    });
    files['manifest.txt'] = specs.map(([key, design]) => `${key} ${design}`).join('\n') + '\n';
    r = runR(R_SCRIPT, files);
  });

  const each = (fn: (s: Scenario) => void) => () => scenarios.forEach(fn);

  it('ANOVA: df, sequential SS, F and p per term (treatments after blocks / rows / cols), error df, sigma', each((s) => {
    const df = rVector(r, `${s.key}.anova.df`);
    const ss = rVector(r, `${s.key}.anova.ss`);
    const f = rVector(r, `${s.key}.anova.f`);
    const p = rVector(r, `${s.key}.anova.p`);
    const rows = s.result.anova.rows;
    if (rows.length !== df.length - 1) throw new Error(`${s.key}: ${rows.length} ANOVA rows vs R ${df.length - 1}`);
    rows.forEach((row, i) => {
      if (row.df !== df[i]) throw new Error(`${s.key} ${row.term} df ${row.df} vs ${df[i]}`);
      expectClose(row.ss, ss[i], REL, 1e-6, `${s.key} SS ${row.term}`);
      expectClose(row.f, f[i], REL, 1e-6, `${s.key} F ${row.term}`);
      expectClose(row.p, p[i], REL, 1e-300, `${s.key} p ${row.term}`);
    });
    if (s.result.anova.residual.df !== df[df.length - 1]) throw new Error(`${s.key} residual df`);
    expectClose(s.result.anova.residual.ss, ss[ss.length - 1], REL, 1e-6, `${s.key} residual SS`);
    expectClose(s.result.model.sigma, r.values[`${s.key}.sigma`], REL, 1e-6, `${s.key} sigma`);
    expectClose(s.result.anova.cv, r.values[`${s.key}.cv`], REL, 1e-6, `${s.key} CV%`);
    // LSD basis: one common SED only when every pair has the same SE — the orthogonal designs
    // (the row-column layout here has complete rows but random columns, so its SEDs differ).
    expect(s.result.anova.lsd5.basis).toBe(['crbal', 'rcbbal', 'lsbal'].includes(s.key) ? 'common' : 'average');
  }));

  it('adjusted means, their SEs and full covariance (equal weights over nuisance levels)', each((s) => {
    const m = rVector(r, `${s.key}.means`);
    const se = rVector(r, `${s.key}.meanse`);
    const cov = rVector(r, `${s.key}.cov`);
    const k = m.length;
    s.result.means.forEach((mean, i) => {
      expectClose(mean.estimate, m[i], REL, 1e-6, `${s.key} mean ${mean.treatment}`);
      expectClose(mean.se, se[i], REL, 1e-6, `${s.key} mean SE ${mean.treatment}`);
    });
    for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) expectClose(s.result.meansCovariance.matrix[i][j], cov[i * k + j], REL, se[i] * se[j], `${s.key} cov[${i},${j}]`);
  }));

  it('contrasts with divisors: estimate, SE, df, p and 95% CI', each((s) => {
    const est = rVector(r, `${s.key}.c.est`);
    const se = rVector(r, `${s.key}.c.se`);
    const p = rVector(r, `${s.key}.c.p`);
    const lo = rVector(r, `${s.key}.c.lo`);
    const hi = rVector(r, `${s.key}.c.hi`);
    s.result.contrasts.forEach((c0, i) => {
      if (!c0.estimable) throw new Error(`${s.key} ${c0.name} not estimable: ${c0.reason}`);
      const c = c0 as EstimableContrast;
      expectClose(c.estimate, est[i], REL, se[i], `${s.key} ${c.name} estimate`);
      expectClose(c.se, se[i], REL, 1e-6, `${s.key} ${c.name} se`);
      expectClose(c.p, p[i], REL, 1e-300, `${s.key} ${c.name} p`);
      expectClose(c.lower, lo[i], REL, se[i], `${s.key} ${c.name} lower`);
      expectClose(c.upper, hi[i], REL, se[i], `${s.key} ${c.name} upper`);
      if (c.df !== s.result.anova.residual.df) throw new Error('contrast df must be the error df');
    });
  }));

  it('pairwise differences: unadjusted p, Tukey–Kramer p (R ptukey, 1e-10 absolute: upper tail formed as 1 - P in both), Holm p (R p.adjust), LSD', each((s) => {
    const diff = rVector(r, `${s.key}.pw.diff`);
    const se = rVector(r, `${s.key}.pw.se`);
    const praw = rVector(r, `${s.key}.pw.praw`);
    const tukey = rVector(r, `${s.key}.pw.tukey`);
    const holm = rVector(r, `${s.key}.pw.holm`);
    const tk = s.result.pairwise!.comparisons;
    const hm = s.holm.pairwise!.comparisons;
    tk.forEach((c, i) => {
      expectClose(c.difference, diff[i], REL, se[i], `${s.key} ${c.first}-${c.second}`);
      expectClose(c.se, se[i], REL, 1e-6, `${s.key} ${c.first}-${c.second} se`);
      expectClose(c.pUnadjusted, praw[i], REL, 1e-300, `${s.key} raw p`);
      expectClose(c.pAdjusted, tukey[i], 1, 1e-10, `${s.key} Tukey p`);
      expectClose(hm[i].pAdjusted, holm[i], REL, 1e-300, `${s.key} Holm p`);
    });
    expectClose(s.result.anova.lsd5.value, r.values[`${s.key}.lsd`], REL, 1e-6, `${s.key} LSD`);
  }));

  it('diagnostics: rstandard, rstudent, hatvalues, cooks.distance, normal scores, Brown–Forsythe (by hand in R)', each((s) => {
    const names = ['rstandard', 'rstudent', 'hat', 'cooks'] as const;
    const ours = {
      rstandard: s.result.diagnostics.plots.map((p) => p.standardized),
      rstudent: s.result.diagnostics.plots.map((p) => p.studentized),
      hat: s.result.diagnostics.plots.map((p) => p.leverage),
      cooks: s.result.diagnostics.plots.map((p) => p.cooksDistance),
    };
    for (const n of names) {
      const ref = rVector(r, `${s.key}.${n}`);
      ref.forEach((v, i) => expectClose(ours[n][i], v, 1e-7, 1e-3, `${s.key} ${n}[${i}]`));
    }
    // Normal scores: plots whose standardised residuals tie (to 1e-9, as balanced layouts
    // produce) may swap ranks between two programs; a score must match one of its tie group's.
    const rs = rVector(r, `${s.key}.rstandard`);
    const ns = rVector(r, `${s.key}.nscore`);
    s.result.diagnostics.plots.forEach((p, i) => {
      if (Number.isNaN(rs[i])) {
        if (p.normalScore !== null) expect.fail(`${s.key} plot ${i} has leverage 1: no normal score expected`);
        return;
      }
      const candidates = ns.filter((_, j) => Math.abs(rs[j] - rs[i]) <= 1e-9 * Math.max(1, Math.abs(rs[i])));
      if (!candidates.some((v) => Math.abs((p.normalScore as number) - v) <= 1e-12 * Math.max(1, Math.abs(v)))) expect.fail(`${s.key} normal score ${i}: ${p.normalScore} not in ${candidates}`);
    });
    expectClose(s.result.diagnostics.brownForsythe.f, r.values[`${s.key}.bf.f`], 1e-7, 1e-6, `${s.key} BF F`);
    expectClose(s.result.diagnostics.brownForsythe.p, r.values[`${s.key}.bf.p`], 1e-7, 1e-300, `${s.key} BF p`);
  }));

  it('spatial check: linear + quadratic row and column trends, joint and per direction (R anova(lm0, lm1))', each((s) => {
    const sp = s.result.diagnostics.spatial;
    if (s.design === 'latin-square' || s.design === 'row-column') {
      if (sp.available) throw new Error(`${s.key}: rows and cols are already factors`);
      return;
    }
    for (const dir of ['joint', 'rows', 'cols'] as const) {
      const [df, f, p] = rVector(r, `${s.key}.sp.${dir}`);
      const ours = sp[dir];
      if (df === 0) {
        if (ours?.available) throw new Error(`${s.key} ${dir}: R has 0 df, engine says available`);
        continue;
      }
      if (ours?.df1 !== df) throw new Error(`${s.key} ${dir}: df ${ours?.df1} vs R ${df}`);
      expectClose(ours.f, f, 1e-7, 1e-6, `${s.key} spatial ${dir} F`);
      expectClose(ours.p, p, 1e-7, 1e-300, `${s.key} spatial ${dir} p`);
    }
  }));

  it("Tukey–Kramer vs R's TukeyHSD on the balanced blocks trial (p 1e-10 absolute; limits to 1e-4 x SE since R's qtukey stops at 1e-4)", () => {
    const s = scenarios.find((x) => x.key === 'rcbbal')!;
    const diff = rVector(r, 'rcbbal.hsd.diff');
    const lwr = rVector(r, 'rcbbal.hsd.lwr');
    const upr = rVector(r, 'rcbbal.hsd.upr');
    const p = rVector(r, 'rcbbal.hsd.p');
    s.result.pairwise!.comparisons.forEach((c, i) => {
      // TukeyHSD reports second minus first.
      expectClose(-(c.difference as number), diff[i], REL, 1e-6, `HSD diff ${i}`);
      expectClose(c.pAdjusted, p[i], 1, 1e-10, `HSD p ${i}`);
      expectClose(-(c.upper as number), lwr[i], 1e-4 * (c.se as number), 1, `HSD lwr ${i}`);
      expectClose(-(c.lower as number), upr[i], 1e-4 * (c.se as number), 1, `HSD upr ${i}`);
    });
  });
});
