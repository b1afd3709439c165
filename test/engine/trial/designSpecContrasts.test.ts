// The three contrast kinds of the DESIGN §5 example spec (treated_vs_control with
// coefficients and divisor 6, early_vs_late factor levels, rate_linear trend), plus a
// quadratic trend, on a randomised-blocks trial with a missing plot, against R's
// lm(y ~ block + trt) with the contrast coefficients written out independently in R.
// Tolerance 1e-8 relative (floor: the SE for estimates).
import { describe, it, beforeAll, expect } from 'vitest';
import { analyzeTrial } from '../../../src/engine/trial/analyzeTrial.js';
import type { TrialAnalysis, EstimableContrast } from '../../../src/engine/trial/types.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import { resolveContrast } from '../../../src/engine/contrasts/resolve.js';
import { mulberry32, normalSampler } from '../../../src/engine/stats/random.js';
import type { PlotObservation, TreatmentInfo, TrialInput } from '../../../src/engine/types.js';
import { runR, rVector, type RRun } from '../../support/rscript.js';
import { shuffle, plotsCsv } from './simulate.js';
import { expectClose } from './close.js';
import { EXAMPLE_CONTRASTS, EXAMPLE_TREATMENTS } from '../../support/exampleProtocol.js';

const REL = 1e-8;

const treatments: TreatmentInfo[] = EXAMPLE_TREATMENTS;

// The DESIGN §5 example spec, keys as written there (plus a quadratic trend).
const spec = analysisSpecSchema.parse({
  trait: 'yield',
  columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y', factors: { rate: 'rate', timing: 'timing' }, row: 'row', col: 'col' },
  control: 'CTL',
  transform: 'none',
  contrasts: [
    ...EXAMPLE_CONTRASTS,
    { name: 'rate_quadratic', trend: 'rate', degree: 2 },
  ],
  oneStage: { random: ['trial', 'block', 'treatment-by-trial'], residual: 'common', df: 'satterthwaite' },
  twoStage: { tau2: 'reml', interval: 'hksj' },
  moderators: [],
  threshold: 0,
});

function rcbTrial(seed: number, missing: number): TrialInput {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const plots: PlotObservation[] = [];
  let id = 0;
  for (let b = 1; b <= 4; b++) {
    const be = 0.5 * z();
    const order = shuffle(treatments.slice(), u);
    order.forEach((t, i) => {
      const rate = t.levels.rate as number;
      const gain = 2 * (1 - Math.exp(-0.015 * rate)) * (t.levels.timing === 'late' ? 0.8 : 1);
      plots.push({ plotId: ++id, treatment: t.code, block: String(b), row: i + 1, col: b, value: 5 + be + gain + 0.3 * z() });
    });
  }
  for (const i of shuffle(plots.map((_, k) => k), u).slice(0, missing)) plots[i] = { ...plots[i], value: null };
  return { trial: 'T', design: 'randomised-blocks', plots };
}

const R_SCRIPT = String.raw`
d <- read.csv("trial.csv", stringsAsFactors = FALSE)
lv <- c("CTL", "A1", "A2", "A4", "B1", "B2", "B4")
d$trt <- factor(d$trt, levels = lv); d$block <- factor(d$block)
x <- c(0, 40, 80, 160, 40, 80, 160)
C <- rbind(
  treated_vs_control = c(-6, 1, 1, 1, 1, 1, 1) / 6,
  early_vs_late = c(0, 1, 1, 1, -1, -1, -1) / 3,
  rate_linear = (x - mean(x)) / sum((x - mean(x))^2),
  rate_quadratic = poly(x, 2)[, 2])
for (scale in c("none", "log")) {
  fit <- if (scale == "none") lm(y ~ block + trt, d) else lm(log(y) ~ block + trt, d)
  grid <- expand.grid(block = levels(d$block), trt = lv)
  X <- model.matrix(~ block + trt, grid)
  L <- t(sapply(lv, function(t) colMeans(X[grid$trt == t, , drop = FALSE])))
  K <- C %*% L
  est <- drop(K %*% coef(fit)); se <- sqrt(diag(K %*% vcov(fit) %*% t(K)))
  dfe <- fit$df.residual; tq <- qt(0.975, dfe)
  emit(paste0(scale, ".est"), est); emit(paste0(scale, ".se"), se)
  emit(paste0(scale, ".p"), 2 * pt(-abs(est / se), dfe)); emit(paste0(scale, ".lo"), est - tq * se); emit(paste0(scale, ".hi"), est + tq * se)
  emit(paste0(scale, ".df"), dfe)
}
emit("quad", C[4, ])
`;

describe('DESIGN example spec contrasts vs R lm(y ~ block + trt), randomised blocks with a missing plot', () => {
  let r: RRun;
  let res: TrialAnalysis;
  let logRes: TrialAnalysis;
  beforeAll(() => {
    const trial = rcbTrial(77, 1);
    const resolved = spec.contrasts.map((c) => resolveContrast(c, treatments, spec.control));
    res = analyzeTrial(trial, treatments, resolved, { transform: 'none', confidence: spec.confidence, pairwise: 'none' });
    logRes = analyzeTrial(trial, treatments, resolved, { transform: 'log', confidence: spec.confidence, pairwise: 'none' });
    r = runR(R_SCRIPT, { 'trial.csv': plotsCsv(trial) });
  });

  it('estimates, SEs, df, p and CIs equal R to 1e-8 (quadratic up to the sign convention of poly)', () => {
    for (const [scale, result] of [['none', res], ['log', logRes]] as const) {
      const est = rVector(r, `${scale}.est`);
      const se = rVector(r, `${scale}.se`);
      const p = rVector(r, `${scale}.p`);
      const lo = rVector(r, `${scale}.lo`);
      const hi = rVector(r, `${scale}.hi`);
      result.contrasts.forEach((c0, i) => {
        expect(c0.estimable).toBe(true);
        const c = c0 as EstimableContrast;
        const sign = c.name === 'rate_quadratic' ? Math.sign((c.estimate as number) * est[i]) : 1;
        expectClose(sign * (c.estimate as number), est[i], REL, se[i], `${scale} ${c.name} estimate`);
        expectClose(c.se, se[i], REL, 1e-12, `${scale} ${c.name} se`);
        expectClose(c.p, p[i], REL, 1e-300, `${scale} ${c.name} p`);
        expect(c.df).toBe(r.values[`${scale}.df`]);
        const [l, u] = sign > 0 ? [c.lower, c.upper] : [-(c.upper as number), -(c.lower as number)];
        expectClose(l, lo[i], REL, se[i], `${scale} ${c.name} lower`);
        expectClose(u, hi[i], REL, se[i], `${scale} ${c.name} upper`);
      });
    }
  });

  it('degree-2 scores equal R poly(x, 2) on the 7 treatment points, up to sign (1e-12 absolute)', () => {
    const quad = rVector(r, 'quad');
    const c = res.contrasts[3] as EstimableContrast;
    const ours = treatments.map((t) => c.coefficients[t.code] / c.divisor);
    const sign = Math.sign(ours[0] * quad[0]);
    ours.forEach((v, i) => expect(Math.abs(sign * v - quad[i])).toBeLessThan(1e-12));
  });

  it('on the log scale, differences of averages and the linear slope become ratios: exp of the R estimate and limits (1e-8 relative)', () => {
    const est = rVector(r, 'log.est');
    const lo = rVector(r, 'log.lo');
    const hi = rVector(r, 'log.hi');
    [0, 1, 2].forEach((i) => {
      const c = logRes.contrasts[i] as EstimableContrast;
      expect(c.ratio).not.toBeNull();
      expectClose(c.ratio!.ratio, Math.exp(est[i]), REL, 1e-12, `${c.name} ratio`);
      expectClose(c.ratio!.lower, Math.exp(lo[i]), REL, 1e-12, `${c.name} ratio lower`);
      expectClose(c.ratio!.upper, Math.exp(hi[i]), REL, 1e-12, `${c.name} ratio upper`);
      expectClose(c.ratio!.percentChange, 100 * (Math.exp(est[i]) - 1), REL, 1e-6, `${c.name} percent`);
    });
    expect((logRes.contrasts[3] as EstimableContrast).ratio).toBeNull();
    expect((res.contrasts[0] as EstimableContrast).ratio).toBeNull();
  });

  it('a contrast that needs a treatment absent from the trial is reported not estimable, with the reason; others stay estimable', () => {
    const trial = rcbTrial(78, 0);
    const withoutB4: TrialInput = { ...trial, plots: trial.plots.map((p) => (p.treatment === 'B4' ? { ...p, value: null } : p)) };
    const resolved = spec.contrasts.map((c) => resolveContrast(c, treatments, spec.control));
    const out = analyzeTrial(withoutB4, treatments, resolved, { transform: 'none', confidence: 0.95, pairwise: 'holm' });
    for (const c of out.contrasts) {
      expect(c.estimable).toBe(false);
      if (!c.estimable) expect(c.reason).toMatch(/B4/);
    }
    const mean = out.means.find((m) => m.treatment === 'B4')!;
    expect(mean).toMatchObject({ estimable: false, estimate: null, n: 0 });
    expect(out.flags.some((f) => f.code === 'treatment-absent' && f.treatment === 'B4')).toBe(true);
    const ok = analyzeTrial(withoutB4, treatments, [resolveContrast({ name: 'a2_vs_ctl', coefficients: { A2: 1, CTL: -1 }, divisor: 1 }, treatments)], { transform: 'none', confidence: 0.95, pairwise: 'none' });
    expect(ok.contrasts[0].estimable).toBe(true);
    expect(out.pairwise!.comparisons.length).toBe(15);
  });
});
