// R scripts for the one-stage checks. The model in R's own formula language (tests only):
// y ~ 0 + trt + (1|env) + (1|env:block) + (1|env:trt), lme4::lmer with REML; lmerTest::contest
// for Satterthwaite (and Kenward-Roger, which lmerTest takes from pbkrtest::vcovAdj/Lb_ddf).
// Contrast rows are passed in a CSV so R and TypeScript use the very same coefficients.
import { runR, type RRun } from '../../../support/rscript.js';

export function contrastCsv(treatments: readonly string[], rows: readonly Float64Array[]): string {
  return ['trt,' + rows.map((_, i) => `c${i + 1}`).join(','), ...treatments.map((t, j) => [t, ...rows.map((r) => r[j])].join(','))].join('\n') + '\n';
}

export function runLme4(csv: string, contrasts: string, opts: { kenwardRoger: boolean; randTests: boolean; trialRaw: boolean }): RRun {
  const script = `
suppressMessages({ library(lme4); library(lmerTest); library(pbkrtest) })
d <- read.csv('data.csv', stringsAsFactors = TRUE)
cm <- read.csv('contrasts.csv', stringsAsFactors = FALSE)
d$trt <- factor(d$trt, levels = cm$trt)
f0 <- lmer(y ~ 0 + trt + (1|env) + (1|env:block) + (1|env:trt), data = d, REML = TRUE)
emit('remlcrit_default', REMLcrit(f0))
# lme4's default bobyqa stopping rule can stop ~1e-8 short of the optimum (seen on seed 101:
# criterion 6e-9 above ours, means' SEs off by 1.4e-5); tighten it so the comparison is of optima.
f <- update(f0, control = lmerControl(optimizer = 'bobyqa', optCtrl = list(rhoend = 1e-12, maxfun = 1e5)))
emit('remlcrit', REMLcrit(f))
emit('loglik', as.numeric(logLik(f)))
vc <- as.data.frame(VarCorr(f))
emit('v_trial', vc$vcov[vc$grp == 'env'])
emit('v_block', vc$vcov[vc$grp == 'env:block'])
emit('v_tt', vc$vcov[vc$grp == 'env:trt'])
emit('v_res', vc$vcov[vc$grp == 'Residual'])
emit('fixef', fixef(f))
emit('fixse', sqrt(diag(as.matrix(vcov(f)))))
L <- as.matrix(cm[, -1, drop = FALSE])
for (i in seq_len(ncol(L))) {
  l <- matrix(L[, i], 1)
  s <- contest(f, l, ddf = 'Satterthwaite', joint = FALSE)
  emit(paste0('est', i), s$Estimate); emit(paste0('se', i), s[['Std. Error']]); emit(paste0('sdf', i), s$df)
  if (${opts.kenwardRoger ? 'TRUE' : 'FALSE'}) {
    k <- contest(f, l, ddf = 'Kenward-Roger', joint = FALSE)
    emit(paste0('krdf', i), k$df); emit(paste0('krse', i), k[['Std. Error']])
  }
}
if (${opts.randTests ? 'TRUE' : 'FALSE'}) {
  rt <- rand(f)
  emit('lrt', rt$LRT[-1])
}
if (${opts.trialRaw ? 'TRUE' : 'FALSE'}) {
  re <- ranef(f)[['env:trt']]
  envs <- levels(d$env)
  for (e in seq_along(envs)) {
    de <- d[d$env == envs[e], ]
    de$trt <- droplevels(de$trt)
    m <- lm(y ~ 0 + trt + block, data = de, contrasts = list(block = 'contr.sum'))
    for (i in seq_len(ncol(L))) {
      u <- re[paste(envs[e], cm$trt, sep = ':'), 1]
      u[is.na(u)] <- 0
      emit(paste0('blup', i, '_', e), sum(L[, i] * (fixef(f) + u)))
      li <- L[match(levels(de$trt), cm$trt), i]
      if (all(L[!(cm$trt %in% levels(de$trt)), i] == 0)) {
        b <- coef(m)[paste0('trt', levels(de$trt))]
        V <- vcov(m)[paste0('trt', levels(de$trt)), paste0('trt', levels(de$trt))]
        emit(paste0('raw', i, '_', e), sum(li * b)); emit(paste0('rawse', i, '_', e), sqrt(sum(li * (V %*% li))))
      }
    }
  }
}
`;
  return runR(script, { 'data.csv': csv, 'contrasts.csv': contrasts });
}
