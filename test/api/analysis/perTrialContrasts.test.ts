// Contrasts on a network whose protocol changed over the years and whose sites dropped
// treatments (test/support/protocolChangeNetwork.ts), read as `analyze --data` reads a file.
// Checked live against R:
// - per trial: lm(y ~ 0 + trt + block) with sum-to-zero blocks, the contrast written out in R from
//   the trial's own treatments (estimate and SE to 1e-8);
// - pooling: the REML random-effects pool written in R on R's own per-trial estimates (tau² 1e-6,
//   mean and Wald SE 1e-6);
// - one stage: lme4::lmer + lmerTest::contest on the same unbalanced network (means, contrasts
//   and SEs 1e-5, Satterthwaite df 1e-3).
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runAnalysisFromSource } from '../../../src/api/analysis/fromSource.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import { runR, type RRun } from '../../support/rscript.js';
import { protocolChangeCsv, DROPPED, PROTOCOL_CONTRASTS as C, PROTOCOL_SPEC_BASE } from '../../support/protocolChangeNetwork.js';
import { contrastCsv, runLme4 } from '../../engine/onestage/support/lme4Reference.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-pertrial-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const NAMES = ['rate_linear', 'rate_quadratic', 'treated_vs_control', 'early_vs_late', 'e60_vs_control'] as const;
const spec = analysisSpecSchema.parse({
  ...PROTOCOL_SPEC_BASE,
  contrasts: [
    C.rateLinear,
    C.rateQuadratic,
    C.treatedVsControl,
    C.earlyVsLate,
    C.e60VsControl,
    // No trial tested both: nothing to pool, said in words.
    { name: 'e50_vs_e60', coefficients: { E50: 1, E60: -1 }, divisor: 1 },
  ],
  oneStage: { random: ['trial', 'block', 'treatment-by-trial'], residual: 'common', df: 'satterthwaite', lrt: false, profile: false },
  twoStage: { tau2: 'reml', interval: 'wald', prediction: 'plug-in-t' },
});

// Each contrast written out in R from the trial's own treatments, then pooled by REML in R.
const PER_TRIAL_R = String.raw`
d <- read.csv('data.csv', stringsAsFactors = FALSE)
d <- d[!is.na(d$y), ]
envs <- sort(unique(d$env))
contrast_for <- function(name, info) {
  x <- info$rate; names(x) <- info$trt
  present <- info$trt
  cf <- setNames(rep(0, length(present)), present)
  if (name == 'rate_linear') { if (length(unique(x)) < 2) return(NULL); cf[] <- (x - mean(x)) / sum((x - mean(x))^2) }
  if (name == 'rate_quadratic') { if (length(unique(x)) < 3) return(NULL); p <- poly(x, 2)[, 2]; cf[] <- p * sign(sum(p * x^2)) }
  if (name == 'treated_vs_control') { if (!('CTL' %in% present)) return(NULL); tr <- setdiff(present, 'CTL'); cf[tr] <- 1 / length(tr); cf['CTL'] <- -1 }
  if (name == 'early_vs_late') {
    e <- info[info$timing == 'early', ]; l <- info[info$timing == 'late', ]
    both <- intersect(e$rate, l$rate); if (length(both) == 0) return(NULL)
    for (r in both) { cf[e$trt[e$rate == r]] <- 1 / length(both); cf[l$trt[l$rate == r]] <- -1 / length(both) }
  }
  if (name == 'e60_vs_control') { if (!all(c('E60', 'CTL') %in% present)) return(NULL); cf['E60'] <- 1; cf['CTL'] <- -1 }
  cf
}
reml_pool <- function(y, v) {
  ll <- function(t2) { w <- 1 / (v + t2); mu <- sum(w * y) / sum(w); -0.5 * (sum(log(v + t2)) + sum(w * (y - mu)^2) + log(sum(w))) }
  o <- optimize(ll, c(0, 10 * (var(y) + max(v))), maximum = TRUE, tol = 1e-14)
  t2 <- if (ll(0) >= o$objective) 0 else o$maximum
  w <- 1 / (v + t2)
  c(t2, sum(w * y) / sum(w), sqrt(1 / sum(w)))
}
for (name in strsplit(Sys.getenv('CONTRASTS'), ',')[[1]]) {
  ys <- c(); vs <- c()
  for (i in seq_along(envs)) {
    de <- d[d$env == envs[i], ]
    info <- unique(de[, c('trt', 'rate', 'timing')]); info <- info[order(info$trt), ]
    cf <- contrast_for(name, info)
    if (is.null(cf)) next
    de$trt <- factor(de$trt, levels = info$trt)
    m <- lm(y ~ 0 + trt + factor(block), data = de, contrasts = list('factor(block)' = 'contr.sum'))
    b <- coef(m)[paste0('trt', info$trt)]; V <- vcov(m)[paste0('trt', info$trt), paste0('trt', info$trt)]
    est <- sum(cf * b); se <- sqrt(sum(cf * (V %*% cf)))
    emit(paste0(name, '_est_', envs[i]), est); emit(paste0(name, '_se_', envs[i]), se)
    ys <- c(ys, est); vs <- c(vs, se^2)
  }
  p <- reml_pool(ys, vs)
  emit(paste0(name, '_tau2'), p[1]); emit(paste0(name, '_mu'), p[2]); emit(paste0(name, '_muse'), p[3])
}
`;

/** A trial's contrast as the report's JSON carries it, estimable or not. */
interface Shown {
  readonly name: string;
  readonly estimable?: boolean;
  readonly estimate?: number | null;
  readonly se?: number | null;
  readonly reason?: string;
  readonly meaning?: string;
}
const contrastsOf = (t: { readonly contrasts: readonly unknown[] }): readonly Shown[] => t.contrasts as readonly Shown[];

describe('contrasts follow what each trial tested (protocol changed over the years, treatments dropped)', () => {
  const csv = protocolChangeCsv(20260);
  let report: Awaited<ReturnType<typeof runAnalysisFromSource>>;
  let r: RRun;
  beforeAll(async () => {
    writeFileSync(join(dir, 'network.csv'), csv);
    report = await runAnalysisFromSource({ data: join(dir, 'network.csv'), spec, save: false });
    process.env.CONTRASTS = NAMES.join(',');
    r = runR(PER_TRIAL_R, { 'data.csv': csv });
  }, 600_000);

  it('each trial estimate and SE equal R lm with the same per-trial contrast (1e-8); trials R cannot form are left out with a reason', () => {
    let compared = 0;
    for (const t of report.twoStage.trials) {
      for (const name of NAMES) {
        const c = contrastsOf(t).find((x) => x.name === name);
        expect(c).toBeDefined();
        const rEst = r.values[`${name}_est_${t.trial}`];
        if (rEst === undefined) {
          expect(c?.reason ?? '', `${name} in ${t.trial}`).toMatch(/\w+/);
          expect(c?.estimable).toBe(false);
          continue;
        }
        expect(c?.estimable, `${name} in ${t.trial}`).toBe(true);
        if (!c?.estimable) continue;
        expect(Math.abs((c.estimate as number) - rEst)).toBeLessThan(1e-8);
        expect(Math.abs((c.se as number) - r.values[`${name}_se_${t.trial}`])).toBeLessThan(1e-8);
        compared++;
      }
    }
    expect(compared).toBeGreaterThan(50);
  });

  it('pools every trial that can carry each contrast, lists the others with reasons, and equals the REML pool in R (tau² 1e-6)', () => {
    for (const name of NAMES) {
      const pooled = report.twoStage.pooled.find((p) => p.name === name);
      expect(pooled, name).toBeDefined();
      if (!pooled) continue;
      const carried = report.twoStage.trials.filter((t) => r.values[`${name}_est_${t.trial}`] !== undefined).length;
      expect(pooled.k).toBe(carried);
      expect(pooled.leftOut.length).toBe(report.twoStage.trials.length - carried);
      expect(Math.abs((pooled.tau2 as number) - r.values[`${name}_tau2`])).toBeLessThan(1e-6);
      expect(Math.abs((pooled.estimate as number) - r.values[`${name}_mu`])).toBeLessThan(1e-6);
      expect(Math.abs((pooled.se as number) - r.values[`${name}_muse`])).toBeLessThan(1e-6);
    }
    const left = (name: string): string => report.twoStage.pooled.find((p) => p.name === name)?.leftOut.join('; ') ?? '';
    expect(left('rate_quadratic')).toMatch(/S1-2019 \(tested 2 distinct rate levels \(0, 50\); a degree-2 trend needs at least 3\)/);
    expect(left('treated_vs_control')).toMatch(/S3-2023 \(the control CTL was not tested here\)/);
    expect(left('early_vs_late')).toMatch(/S1-2019 \(no treatment has timing = late\)/);
    expect(left('e60_vs_control')).toMatch(/S1-2020 \(not tested here: E60/);
    expect(report.warnings.some((w) => w.startsWith('contrast "early_vs_late": pooled over 6 of 18 trials'))).toBe(true);
    // Early against late uses only the rates tested at both timings, and says which.
    const s1 = report.twoStage.trials.find((t) => t.trial === 'S1-2024');
    expect(DROPPED['S1-2024']).toEqual(['L120']);
    const s1Comparison = s1 && contrastsOf(s1).find((c) => c.name === 'early_vs_late');
    expect(s1Comparison?.estimable).toBe(true);
    expect(s1Comparison?.meaning).toMatch(/over the 1 combination tested at both \(rate 60\); left out, tested at one level only: rate 120/);
  });

  it('a contrast no trial can carry is not pooled; the warning names it, every trial with its reason, and what to change', () => {
    expect(report.twoStage.pooled.some((p) => p.name === 'e50_vs_e60')).toBe(false);
    const w = report.warnings.find((x) => x.startsWith('contrast "e50_vs_e60": not pooled'));
    expect(w).toMatch(/none of the 18 trials can carry it/);
    expect(w).toMatch(/S1-2019 \(not tested here: E60/);
    expect(w).toMatch(/S1-2021 \(not tested here: E50/);
    expect(w).toMatch(/To change: write the coefficients over treatments that some trials tested together/);
    expect(report.warnings.join('\n')).not.toMatch(/Nothing to pool/);
  });

  it('warns that trials tested different rate ranges, naming them', () => {
    const w = report.warnings.find((x) => x.startsWith('trials tested different rate ranges'));
    expect(w).toMatch(/0 to 150 in 4 trials \(S2-2019, S3-2019, S1-2020, S3-2020\)/);
    expect(w).toMatch(/0 to 100 in 1 trial \(S2-2020\)/);
    expect(w).toMatch(/0 to 50 in 1 trial \(S1-2019\)/);
    expect(w).toMatch(/60 to 180 in 1 trial \(S3-2023\)/);
  });

  it('compares the stages where they estimate the same quantity and says why not elsewhere', () => {
    const byName = new Map(report.agreement.map((a) => [a.name, a]));
    // Trials of 2021–22 tested 0 to 240, the network's whole range: the slopes are comparable.
    expect(byName.get('rate_linear')?.agree).not.toBeNull();
    expect(byName.get('rate_linear')?.note).toBeUndefined();
    // A quadratic component is scaled on each trial's own spacing: not compared, with the reason.
    expect(byName.get('rate_quadratic')?.agree).toBeNull();
    expect(byName.get('rate_quadratic')?.note).toMatch(/^not compared: a degree-2 component/);
    expect(report.warnings.some((w) => w.startsWith('contrast "rate_quadratic": one-stage and two-stage estimates are not compared'))).toBe(true);
  });

  it('one-stage means and contrasts (on the population treatment means) equal lme4 / lmerTest on the same unbalanced network (1e-5; df 1e-3)', () => {
    const os = report.oneStage;
    expect(os).not.toBeNull();
    if (!os) return;
    const codes = os.means.map((m) => m.treatment);
    const rate: Record<string, number> = { CTL: 0, E50: 50, E100: 100, E150: 150, E60: 60, E120: 120, E180: 180, E240: 240, L60: 60, L120: 120 };
    const x = codes.map((c) => rate[c]);
    const mean = x.reduce((s, v) => s + v, 0) / x.length;
    const ss = x.reduce((s, v) => s + (v - mean) ** 2, 0);
    // The population versions written out here: slope over every treatment's rate, the mean of all
    // treated against the control, early against late over the rates tested at both (60, 120).
    const rows: Record<string, Float64Array> = {
      rate_linear: Float64Array.from(x, (v) => (v - mean) / ss),
      treated_vs_control: Float64Array.from(codes, (c) => (c === 'CTL' ? -1 : 1 / (codes.length - 1))),
      early_vs_late: Float64Array.from(codes, (c) => ({ E60: 0.5, E120: 0.5, L60: -0.5, L120: -0.5 })[c] ?? 0),
      e60_vs_control: Float64Array.from(codes, (c) => ({ E60: 1, CTL: -1 })[c] ?? 0),
    };
    const names = Object.keys(rows);
    const data = ['env,block,trt,y', ...csv.trim().split('\n').slice(1).map((l) => l.split(',')).filter((f) => f[8] !== '').map((f) => `${f[0]},${f[3]},${f[5]},${f[8]}`)].join('\n');
    const ref = runLme4(data, contrastCsv(codes, names.map((n) => rows[n])), { kenwardRoger: false, randTests: false, trialRaw: false });
    os.means.forEach((m, j) => {
      expect(Math.abs((m.estimate as number) - ref.values[`fixef[${j + 1}]`])).toBeLessThan(1e-5);
      expect(Math.abs((m.se as number) - ref.values[`fixse[${j + 1}]`])).toBeLessThan(1e-5);
    });
    names.forEach((n, i) => {
      const c = os.contrasts.find((x) => x.name === n);
      expect(Math.abs((c?.estimate as number) - ref.values[`est${i + 1}`]), n).toBeLessThan(1e-5);
      expect(Math.abs((c?.se as number) - ref.values[`se${i + 1}`]), n).toBeLessThan(1e-5);
      expect(Math.abs((c?.df as number) - ref.values[`sdf${i + 1}`]), n).toBeLessThan(1e-3);
    });
  }, 600_000);
});
