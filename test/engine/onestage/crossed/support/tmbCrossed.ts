// glmmTMB's REML fit of the crossed one-stage model with one residual variance per trial
// (dispformula = ~ env), on a plot file site,year,env,block,trt,y: the reference for the
// per-trial-residual checks (engine and command).
import { runR, type RRun } from '../../../../support/rscript.js';

/** Our term name -> the grouping glmmTMB's formula names it by. */
export const TMB_GROUP: Record<string, string> = {
  site: 'site',
  year: 'year',
  trial: 'env',
  block: 'env:block',
  'treatment-by-site': 'site:trt',
  'treatment-by-year': 'year:trt',
  'treatment-by-trial': 'env:trt',
};

/**
 * Emits loglik, v_<group> per term, res_<env index> (residual variance per trial, in `envs`
 * order), est<i>, se<i> per contrast (rows of `contrasts` over `codes`).
 */
export function runTmbCrossed(csv: string, codes: readonly string[], contrasts: readonly number[][], terms: readonly string[], envs: readonly string[]): RRun {
  const formula = `y ~ 0 + trt + ${terms.map((t) => `(1|${TMB_GROUP[t]})`).join(' + ')}`;
  const script = String.raw`
suppressMessages(library(glmmTMB))
d <- read.csv("plots.csv", stringsAsFactors = FALSE)
d$site <- factor(d$site); d$year <- factor(d$year); d$env <- factor(d$env); d$block <- factor(d$block)
d$trt <- factor(d$trt, levels = c(${codes.map((c) => `"${c}"`).join(', ')}))
g <- glmmTMB(${formula}, dispformula = ~ env, data = d, REML = TRUE,
             control = glmmTMBControl(optCtrl = list(iter.max = 5000, eval.max = 5000, rel.tol = 1e-14)))
emit("loglik", as.numeric(logLik(g)))
emit("converged", as.numeric(g$fit$convergence == 0))
vc <- VarCorr(g)$cond
for (grp in c(${terms.map((t) => `"${TMB_GROUP[t]}"`).join(', ')})) emit(paste0("v_", grp), vc[[grp]][1])
envs <- c(${envs.map((e) => `"${e}"`).join(', ')})
emit("res", tapply(predict(g, type = "disp")^2, d$env, mean)[envs])
b <- fixef(g)$cond; V <- vcov(g)$cond
L <- rbind(${contrasts.map((c) => `c(${c.join(', ')})`).join(', ')})
for (i in seq_len(nrow(L))) { emit(paste0("est", i), sum(L[i, ] * b)); emit(paste0("se", i), sqrt(as.numeric(t(L[i, ]) %*% V %*% L[i, ]))) }
`;
  return runR(script, { 'plots.csv': csv });
}
