// Chi-square tail probabilities and quantiles for many degrees of freedom (pools of thousands of
// trials). The general incomplete-gamma routine used elsewhere loses accuracy above about 2,000 df
// (checked against R's pchisq/qchisq: at 3,999 df its median is off by 2); here the regularised
// incomplete gamma is computed by its power series (x < a + 1) or continued fraction (Lentz),
// with the prefactor x^a e^-x / Gamma(a) formed in a way that avoids cancellation:
//   log prefactor = -a (u - log1p(u)) + log(a)/2 - log(2 pi)/2 - S(a),  u = x/a - 1,
// S(a) the Stirling series remainder of log Gamma(a) (common practice; Numerical Recipes 6.2
// for the series and fraction, the prefactor rearrangement worked out here).
const HALF_LOG_2PI = 0.5 * Math.log(2 * Math.PI);
const EPS = 1e-16;

/** Stirling remainder: log Gamma(a) - [(a - 1/2) log a - a + log(2 pi)/2]; accurate for a >= 50. */
function stirlingRemainder(a: number): number {
  const a2 = a * a;
  return (1 / 12 - (1 / 360 - (1 / 1260 - 1 / (1680 * a2)) / a2) / a2) / a;
}

/** u - log(1 + u), accurate for small u. */
function uMinusLog1p(u: number): number {
  if (Math.abs(u) > 0.1) return u - Math.log1p(u);
  let term = u;
  let sum = 0;
  for (let n = 2; n < 60; n++) {
    term *= -u;
    const add = -term / n;
    sum += add;
    if (Math.abs(add) < 1e-17 * Math.abs(sum)) break;
  }
  // u - log1p(u) = u²/2 - u³/3 + ...
  return sum;
}

function logPrefactor(a: number, x: number): number {
  const u = x / a - 1;
  return -a * uMinusLog1p(u) + 0.5 * Math.log(a) - HALF_LOG_2PI - stirlingRemainder(a);
}

/** Regularised lower and upper incomplete gamma P(a, x), Q(a, x) for a >= 50. */
function incompleteGamma(a: number, x: number): { lower: number; upper: number } {
  if (x <= 0) return { lower: 0, upper: 1 };
  const pre = Math.exp(logPrefactor(a, x));
  if (x < a + 1) {
    let term = 1 / a;
    let sum = term;
    for (let n = 1; n < 100000; n++) {
      term *= x / (a + n);
      sum += term;
      if (term < sum * EPS) break;
    }
    const lower = sum * pre;
    return { lower, upper: 1 - lower };
  }
  // Continued fraction for Q (modified Lentz).
  const tiny = 1e-300;
  let b = x + 1 - a;
  let c = 1 / tiny;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 100000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < EPS) break;
  }
  const upper = h * pre;
  return { lower: 1 - upper, upper };
}

/** P(X > x), X ~ chi-square(df), df >= 100. */
export function chisqUpperLargeDf(x: number, df: number): number {
  return incompleteGamma(df / 2, x / 2).upper;
}

/** P(X <= x), X ~ chi-square(df), df >= 100 (the series keeps a small lower tail precise). */
export function chisqLowerLargeDf(x: number, df: number): number {
  return incompleteGamma(df / 2, x / 2).lower;
}

/** Quantile at lower probability p, df >= 100: Newton steps from the Wilson–Hilferty start. */
export function chisqQuantileLargeDf(p: number, df: number, normalQuantile: (p: number) => number): number {
  if (p <= 0) return 0;
  if (p >= 1) return Infinity;
  const a = df / 2;
  const h = 2 / (9 * df);
  let x = df * Math.pow(1 - h + normalQuantile(p) * Math.sqrt(h), 3);
  const useUpper = p > 0.5;
  const target = useUpper ? 1 - p : p;
  for (let i = 0; i < 50; i++) {
    const g = incompleteGamma(a, x / 2);
    const f = (useUpper ? g.upper : g.lower) - target;
    const density = Math.exp(logPrefactor(a, x / 2)) / x;
    const step = (useUpper ? -f : f) / density;
    x = Math.max(x - step, x / 2);
    if (Math.abs(step) < 1e-14 * x) break;
  }
  return x;
}
