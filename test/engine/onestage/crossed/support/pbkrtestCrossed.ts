// pbkrtest's Kenward–Roger (vcovAdj for the adjusted covariance, Lb_ddf for the df) on lme4's
// lmer fit of a crossed network, for the checks: once at lmer's own REML optimum and once at
// given relative standard deviations (lmer evaluated there without optimising), so the
// computation itself can be compared at exactly our estimates. The model in R's formula language
// (tests only), from our term names.
import { runR, type RRun } from '../../../../support/rscript.js';
import { R_TERM } from './lmerCrossed.js';

/**
 * `rows`: contrasts over the treatments in `treatments` order (the means are added by R as unit
 * rows after them). `theta`: relative sds by lme4 group name (R_GROUP), our estimates. Fixed years
 * (yearAsFixed) in sum-to-zero coding, as the fitter codes them.
 * Emits, for row i: kdf{i}, kse{i} at lmer's optimum and tdf{i}, tse{i} at theta.
 */
export function runPbkrtestCrossed(csv: string, treatments: readonly string[], rows: readonly number[][], terms: readonly string[], theta: Record<string, number>, yearAsFixed = false): RRun {
  const formula = `y ~ 0 + trt${yearAsFixed ? ' + year' : ''} + ${terms.map((t) => R_TERM[t]).join(' + ')}`;
  const script = `
suppressMessages({ library(lme4); library(pbkrtest) })
d <- read.csv('data.csv', stringsAsFactors = TRUE)
d$year <- factor(d$year)
contrasts(d$year) <- contr.sum(nlevels(d$year))
d$trt <- factor(d$trt, levels = c(${treatments.map((t) => `'${t}'`).join(',')}))
f <- lmer(${formula}, data = d, REML = TRUE, control = lmerControl(optimizer = 'bobyqa', optCtrl = list(rhoend = 1e-12, maxfun = 1e5)))
nt <- nlevels(d$trt)
L <- rbind(${[...rows.map((r) => `c(${r.join(',')})`), 'diag(nt)'].join(', ')})
L <- cbind(L, matrix(0, nrow(L), length(fixef(f)) - nt))
kr <- function(fit, tag) {
  adj <- vcovAdj(fit)
  va <- as.matrix(adj)
  for (i in seq_len(nrow(L))) {
    emit(paste0(tag, 'df', i), Lb_ddf(L[i, , drop = FALSE], vcov(fit), adj))
    emit(paste0(tag, 'se', i), sqrt(drop(L[i, ] %*% va %*% L[i, ])))
  }
}
kr(f, 'k')
emit('remlcrit', REMLcrit(f))
ours <- read.csv('theta.csv', stringsAsFactors = FALSE)
groups <- sub('[.][(]Intercept[)]$', '', names(getME(f, 'theta')))
g <- lmer(${formula}, data = d, REML = TRUE, start = list(theta = ours$theta[match(groups, ours$group)]), control = lmerControl(optimizer = NULL))
emit('tremlcrit', REMLcrit(g))
kr(g, 't')
`;
  const thetaCsv = ['group,theta', ...Object.entries(theta).map(([g, v]) => `${g},${v.toPrecision(17)}`)].join('\n') + '\n';
  return runR(script, { 'data.csv': csv, 'theta.csv': thetaCsv });
}
