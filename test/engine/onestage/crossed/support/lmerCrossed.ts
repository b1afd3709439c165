// R's lme4 (lmer, REML) and lmerTest (contest, Satterthwaite; rand, likelihood-ratio per term)
// on a crossed network, for the checks. The model in R's own formula language (tests only),
// built from our term names; years are a factor (fixed, sum-to-zero, when yearAsFixed).
import { runR, type RRun } from '../../../../support/rscript.js';

export const R_TERM: Record<string, string> = {
  site: '(1|site)',
  year: '(1|year)',
  trial: '(1|env)',
  block: '(1|env:block)',
  'treatment-by-site': '(1|site:trt)',
  'treatment-by-year': '(1|year:trt)',
  'treatment-by-trial': '(1|env:trt)',
};
export const R_GROUP: Record<string, string> = { site: 'site', year: 'year', trial: 'env', block: 'env:block', 'treatment-by-site': 'site:trt', 'treatment-by-year': 'year:trt', 'treatment-by-trial': 'env:trt' };

/** `contrasts`: rows over the treatments in `treatments` order. */
export function runLmerCrossed(csv: string, treatments: readonly string[], contrasts: readonly number[][], terms: readonly string[], yearAsFixed: boolean, lrt: boolean): RRun {
  const formula = `y ~ 0 + trt${yearAsFixed ? ' + year' : ''} + ${terms.map((t) => R_TERM[t]).join(' + ')}`;
  const L = contrasts.map((r) => `c(${r.join(',')})`).join(',');
  const script = `
suppressMessages({ library(lme4); library(lmerTest) })
d <- read.csv('data.csv', stringsAsFactors = TRUE)
d$year <- factor(d$year)
d$trt <- factor(d$trt, levels = c(${treatments.map((t) => `'${t}'`).join(',')}))
contrasts(d$year) <- contr.sum(nlevels(d$year))
f <- lmer(${formula}, data = d, REML = TRUE, control = lmerControl(optimizer = 'bobyqa', optCtrl = list(rhoend = 1e-12, maxfun = 1e5)))
emit('remlcrit', REMLcrit(f))
emit('loglik', as.numeric(logLik(f)))
vc <- as.data.frame(VarCorr(f))
for (g in vc$grp) emit(paste0('v_', g), vc$vcov[vc$grp == g])
nt <- nlevels(d$trt)
emit('fixef', fixef(f)[1:nt])
emit('fixse', sqrt(diag(as.matrix(vcov(f))))[1:nt])
L <- rbind(${L})
L <- cbind(L, matrix(0, nrow(L), length(fixef(f)) - nt))
for (i in seq_len(nrow(L))) {
  s <- contest(f, L[i, , drop = FALSE], ddf = 'Satterthwaite', joint = FALSE)
  emit(paste0('est', i), s$Estimate); emit(paste0('se', i), s[['Std. Error']]); emit(paste0('sdf', i), s$df)
}
if (${lrt ? 'TRUE' : 'FALSE'}) {
  rt <- rand(f)
  for (i in 2:nrow(rt)) { emit(paste0('lrt_', gsub('[^a-z:]', '', sub('.*\\\\| *', '', rownames(rt)[i]))), rt$LRT[i]); emit(paste0('rll_', gsub('[^a-z:]', '', sub('.*\\\\| *', '', rownames(rt)[i]))), rt$logLik[i]) }
}
`;
  return runR(script, { 'data.csv': csv });
}
