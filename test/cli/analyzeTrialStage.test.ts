// Must-show of the trial stage: on plot data generated here (many randomised-block trials,
// some plots missing, one trial missing a treatment), every per-trial contrast estimate and SE
// printed by `manyfield analyze --data ... --json` equals R's lm(y ~ block + trt) on that
// trial, for the three contrast kinds of the example spec. Reference: R stats::lm and vcov
// (Debian r-base-core), contrasts built in R from the adjusted means (block effects averaged
// with equal weights). Tolerance: 1e-6 relative (the bar; agreement is ~1e-12).
import { describe, expect, it } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { manyfield, tempDir } from '../support/cli.js';
import { runR, rVector, relDiff } from '../support/rscript.js';
import { mulberry32, normalSampler } from '../../src/engine/stats/random.js';
import { EXAMPLE_CONTRASTS, EXAMPLE_TREATMENTS } from '../support/exampleProtocol.js';

const TREATMENTS: [string, number, string][] = EXAMPLE_TREATMENTS.map((t) => [t.code, t.levels.rate as number, (t.levels.timing as string | null) ?? '']);

describe('analyze --data: per-trial contrasts equal R lm', () => {
  it('treated_vs_control, early_vs_late and rate_linear on 12 unseen trials', () => {
    const uniform = mulberry32(4242);
    const normal = normalSampler(uniform);
    const lines = ['env,block,trt,rate,timing,y'];
    const trials = 12;
    for (let e = 1; e <= trials; e++) {
      const envMean = 5 + normal();
      const sigma = 0.2 + uniform() * 0.6;
      const blocks = 3 + (e % 3);
      for (let b = 1; b <= blocks; b++) {
        const blockEffect = 0.3 * normal();
        for (const [code, rate, timing] of TREATMENTS) {
          if (e === 5 && code === 'B4') continue; // a treatment absent from one trial
          const missing = uniform() < 0.06;
          const y = envMean + blockEffect + 1.5 * (1 - Math.exp(-0.015 * rate)) * (timing === 'late' ? 0.8 : 1) + sigma * normal();
          lines.push(`E${e},${b},${code},${rate},${timing},${missing ? '' : y.toFixed(6)}`);
        }
      }
    }
    const dir = tempDir();
    const data = join(dir, 'plots.csv');
    writeFileSync(data, `${lines.join('\n')}\n`);
    const spec = {
      trait: 'yield',
      columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y', factors: { rate: 'rate', timing: 'timing' } },
      control: 'CTL',
      transform: 'none',
      contrasts: EXAMPLE_CONTRASTS,
      oneStage: null,
      twoStage: { tau2: 'reml', interval: 'hksj' },
    };
    const specFile = join(dir, 'spec.json');
    writeFileSync(specFile, JSON.stringify(spec));
    const run = manyfield(['analyze', '--data', data, '--spec', specFile, '--json']);
    expect(run.stderr).toBe('');
    expect(run.status).toBe(0);
    const out = JSON.parse(run.stdout) as {
      twoStage: { trials: { trial: string; contrasts: { name: string; estimate?: number | null; se?: number | null; estimable?: boolean }[] }[] };
      warnings: string[];
    };

    const r = runR(
      `
d <- read.csv("plots.csv", na.strings = "")
d$block <- factor(d$block)
codes <- c("CTL","A1","A2","A4","B1","B2","B4")
rates <- c(0, 40, 80, 160, 40, 80, 160)
# Coefficients written out independently of Manyfield's resolver.
cc <- list(
  treated_vs_control = c(-6, 1, 1, 1, 1, 1, 1) / 6,
  early_vs_late = c(0, 1, 1, 1, -1, -1, -1) / 3,
  rate_linear = (rates - mean(rates)) / sum((rates - mean(rates))^2))
for (e in sort(unique(d$env))) {
  s <- d[d$env == e & !is.na(d$y), ]
  s$block <- droplevels(s$block)
  s$trt <- factor(s$trt, levels = intersect(codes, unique(s$trt)))
  fit <- lm(y ~ block + trt, data = s)
  grid <- expand.grid(block = levels(s$block), trt = levels(s$trt))
  X <- model.matrix(~ block + trt, data = grid)
  M <- t(sapply(levels(s$trt), function(t) colMeans(X[grid$trt == t, , drop = FALSE])))
  present <- levels(s$trt); x <- rates[match(present, codes)]
  timing <- ifelse(substr(present, 1, 1) == "A", "early", ifelse(substr(present, 1, 1) == "B", "late", ""))
  # Trend and factor comparison follow what the trial tested: the slope over its own rates, early
  # against late over the rates tested at both timings. Custom coefficients need every treatment.
  own <- list(rate_linear = (x - mean(x)) / sum((x - mean(x))^2))
  both <- intersect(x[timing == "early"], x[timing == "late"])
  own$early_vs_late <- ifelse(timing == "early" & x %in% both, 1, ifelse(timing == "late" & x %in% both, -1, 0)) / length(both)
  for (n in names(cc)) {
    w <- if (n %in% names(own)) own[[n]] else cc[[n]][match(levels(s$trt), codes)]
    if (!(n %in% names(own)) && length(levels(s$trt)) < 7 && any(cc[[n]][!(codes %in% levels(s$trt))] != 0)) next
    L <- w %*% M
    emit(paste0(e, ".", n, ".est"), L %*% coef(fit))
    emit(paste0(e, ".", n, ".se"), sqrt(L %*% vcov(fit) %*% t(L)))
  }
}
`,
      { 'plots.csv': readFileSync(data, 'utf8') },
    );
    let compared = 0;
    for (const t of out.twoStage.trials) {
      for (const c of t.contrasts) {
        const key = `${t.trial}.${c.name}`;
        if (!(`${key}.est` in r.values)) {
          // Not estimable in R's trial either: Manyfield must say so.
          expect(t.trial).toBe('E5');
          expect(c.estimable).toBe(false);
          continue;
        }
        expect(relDiff(c.estimate as number, rVector(r, `${key}.est`)[0])).toBeLessThan(1e-6);
        expect(relDiff(c.se as number, rVector(r, `${key}.se`)[0])).toBeLessThan(1e-6);
        compared++;
      }
    }
    expect(compared).toBe(trials * 3 - 1); // every trial and contrast but E5's custom coefficients (B4 absent)
    expect(out.warnings.some((w) => w.includes('E5'))).toBe(true);
  });
});
