# Plain base-R versions of the new-site parametric bootstrap (Nagashima, Noma & Furukawa 2019,
# Stat Methods Med Res 28:1689-1702), written independently of the TypeScript engine for live
# cross-checks. Reads data.csv (columns set, y, v); writes values with emit() (see rscript.ts).
#
# Two versions of step 1 (the draw of tau²); steps 2-3 are shared:
#  "qprofile": tau²* is the exact root (uniroot) of the generalised Q = chi-square(k-1) upper-U
#              quantile, 0 when Q(0) is already below it -- the engine's method, without its table.
#  "exactq":   the authors' own choice: tau²* solves P(Q_DL > q_obs; tau²) = U, where Q_DL is
#              DerSimonian–Laird's Q with fixed weights 1/v, a weighted sum of chi-square(1)
#              variables with weights the non-zero eigenvalues of Z A Z (A = W - w w'/sum w,
#              Z = diag(sqrt(v + tau²))); its upper tail by Imhof's (1961) integral, tabulated on a
#              grid of tau² and inverted by linear interpolation.
#  step 2: mean* = m(tau²*) - t(k-1) * sqrt(sum w (y - m)² / ((k - 1) sum w)), w = 1/(v + tau²*)
#  step 3: new site = mean* + N(0, 1) * sqrt(tau²*)
# Interval: type-7 quantiles. Probabilities: mean over draws of P(new site > threshold | draw).
# Monte Carlo SEs: quantiles sqrt(p(1-p)/B)/f(q) with f a kernel density; probabilities sd/sqrt(B).

type7 <- function(x, p) quantile(x, p, type = 7, names = FALSE)
q_se <- function(x, p) { q <- type7(x, p); d <- density(x, n = 2^12); sqrt(p * (1 - p) / length(x)) / approx(d$x, d$y, q)$y }

qgen <- function(t, y, v) { w <- 1 / (v + t); m <- sum(w * y) / sum(w); sum(w * (y - m)^2) }

draw_qprofile <- function(U, y, v) {
  k <- length(y); q0 <- qgen(0, y, v)
  vapply(U, function(u) {
    cval <- qchisq(u, k - 1, lower.tail = FALSE)
    if (q0 <= cval) return(0)
    hi <- mean(v); while (qgen(hi, y, v) > cval) hi <- 2 * hi
    uniroot(function(t) qgen(t, y, v) - cval, c(0, hi), tol = 1e-12 * hi)$root
  }, 0)
}

imhof_upper <- function(q, lambda) {
  f <- function(u) {
    th <- 0.5 * colSums(atan(outer(lambda, u))) - 0.5 * q * u
    rho <- exp(0.25 * colSums(log1p(outer(lambda^2, u^2))))
    sin(th) / (u * rho)
  }
  0.5 + integrate(f, 0, Inf, subdivisions = 2000, rel.tol = 1e-9, stop.on.error = FALSE)$value / pi
}

draw_exactq <- function(U, y, v) {
  k <- length(y); w0 <- 1 / v
  A <- diag(w0) - outer(w0, w0) / sum(w0)
  qa <- drop(t(y) %*% A %*% y)
  H <- function(t) { s <- sqrt(v + t); lam <- eigen(s * t(s * A), symmetric = TRUE, only.values = TRUE)$values[1:(k - 1)]; imhof_upper(qa, lam) }
  grid <- c(0, exp(seq(log(1e-4 * mean(v)), log(1e3 * mean(v)), length.out = 600)))
  Hg <- vapply(grid, H, 0)
  vapply(U, function(u) if (Hg[1] >= u) 0 else approx(Hg, grid, u, ties = "ordered", rule = 2)$y, 0)
}

predictive <- function(tau2, y, v, thr) {
  k <- length(y); B <- length(tau2)
  mv <- vapply(tau2, function(t) { w <- 1 / (v + t); m <- sum(w * y) / sum(w); c(m, sum(w * (y - m)^2) / ((k - 1) * sum(w))) }, c(0, 0))
  centre <- mv[1, ] - rt(B, k - 1) * sqrt(mv[2, ])
  ynew <- centre + rnorm(B) * sqrt(tau2)
  above <- function(x) ifelse(tau2 > 0, pnorm((centre - x) / sqrt(pmax(tau2, 1e-300))), as.numeric(centre > x))
  c0 <- above(0); ct <- above(thr)
  c(lo = type7(ynew, .025), hi = type7(ynew, .975), lo_se = q_se(ynew, .025), hi_se = q_se(ynew, .975),
    ppos = mean(c0), ppos_se = sd(c0) / sqrt(B), pthr = mean(ct), pthr_se = sd(ct) / sqrt(B))
}

d <- read.csv("data.csv")
cfg <- read.csv("config.csv")
for (i in seq_len(nrow(cfg))) {
  s <- cfg$set[i]; y <- d$y[d$set == s]; v <- d$v[d$set == s]
  set.seed(cfg$seed[i])
  U <- runif(cfg$B[i])
  tau2 <- if (cfg$method[i] == "exactq") draw_exactq(U, y, v) else draw_qprofile(U, y, v)
  out <- predictive(tau2, y, v, cfg$threshold[i])
  for (n in names(out)) emit(paste0(s, "_", cfg$method[i], "_", n), out[[n]])
}
