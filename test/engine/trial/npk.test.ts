// Yates' N, P, K factorial in 6 blocks (R's datasets::npk: peas, 2^3 factorial with the
// N:P:K interaction confounded with blocks). Reference tables:
// - the ANOVA table printed in Venables & Ripley (2002), Modern Applied Statistics with S,
//   4th ed., §6.7 (the data's documented reference; R's ?npk gives the source as an Imperial
//   College M.Sc. exercise sheet, after Yates' classic 2^3 experiments). Values RECALLED
//   FROM MEMORY, checked at their printed precision (2 decimals for SS, 3 for F);
// - R's aov(yield ~ block + N*P*K, npk), live, to 1e-8 relative.
// The engine fits block + treatment (8 combinations): the confounded N:P:K column is aliased,
// the adjusted means are not estimable, main effects and two-factor interactions are.
import { describe, it, beforeAll, expect } from 'vitest';
import { analyzeTrial } from '../../../src/engine/trial/analyzeTrial.js';
import type { TrialAnalysis, EstimableContrast } from '../../../src/engine/trial/types.js';
import type { ResolvedContrast } from '../../../src/engine/contrasts/resolve.js';
import type { PlotObservation, TreatmentInfo } from '../../../src/engine/types.js';
import { runR, rVector, type RRun } from '../../support/rscript.js';
import { expectClose } from './close.js';

const code = (n: number, p: number, k: number): string => `N${n}P${p}K${k}`;
const combos: [number, number, number][] = [];
for (const n of [0, 1]) for (const p of [0, 1]) for (const k of [0, 1]) combos.push([n, p, k]);
const treatments: TreatmentInfo[] = combos.map(([n, p, k]) => ({ code: code(n, p, k), levels: { N: n, P: p, K: k } }));

/** ±1 factorial effect contrast (mean at high minus mean at low, divisor 4). */
function effect(name: string, which: number[]): ResolvedContrast {
  const coefficients = Object.fromEntries(combos.map((c) => [code(...c), which.reduce((s, f) => s * (2 * c[f] - 1), 1)]));
  return { name, kind: 'coefficients', coefficients, divisor: 4, meaning: name };
}
const effects = [effect('N', [0]), effect('P', [1]), effect('K', [2]), effect('N:P', [0, 1]), effect('N:K', [0, 2]), effect('P:K', [1, 2]), effect('N:P:K', [0, 1, 2])];

// Venables & Ripley (2002) §6.7 table (from memory): term -> [df, SS, F].
const PUBLISHED: Record<string, [number, number, number]> = {
  block: [5, 343.29, 4.447],
  N: [1, 189.28, 12.259],
  P: [1, 8.4, 0.544],
  K: [1, 95.2, 6.166],
  'N:P': [1, 21.28, 1.378],
  'N:K': [1, 33.14, 2.146],
  'P:K': [1, 0.48, 0.031],
  Residuals: [12, 185.29, NaN],
};

describe("npk (Yates' N, P, K factorial in blocks)", () => {
  let r: RRun;
  let res: TrialAnalysis;
  beforeAll(() => {
    r = runR(`
      emit("block", as.integer(npk$block)); emit("N", as.integer(as.character(npk$N))); emit("P", as.integer(as.character(npk$P)))
      emit("K", as.integer(as.character(npk$K))); emit("y", npk$yield)
      a <- summary(aov(yield ~ block + N * P * K, npk))[[1]]
      emit("aov.df", a$Df); emit("aov.ss", a[["Sum Sq"]]); emit("aov.f", a[["F value"]][-nrow(a)])
      trt <- interaction(npk$N, npk$P, npk$K); b <- anova(lm(yield ~ block + trt, npk))
      emit("lm.df", b$Df); emit("lm.ss", b[["Sum Sq"]]); emit("lm.f", b[["F value"]][-nrow(b)]); emit("lm.p", b[["Pr(>F)"]][-nrow(b)])
      cat(paste("terms", paste(rownames(a), collapse = "|")), "\\n")`);
    const [bl, n, p, k, y] = ['block', 'N', 'P', 'K', 'y'].map((v) => rVector(r, v));
    const plots: PlotObservation[] = y.map((v, i) => ({ plotId: i + 1, treatment: code(n[i], p[i], k[i]), block: String(bl[i]), row: null, col: null, value: v }));
    res = analyzeTrial({ trial: 'npk', design: 'randomised-blocks', plots }, treatments, effects, { transform: 'none', confidence: 0.95, pairwise: 'none' });
  });

  it('block and treatment rows equal R anova(lm(yield ~ block + trt)) to 1e-8; one treatment column aliased (N:P:K with blocks)', () => {
    const df = rVector(r, 'lm.df');
    const ss = rVector(r, 'lm.ss');
    const f = rVector(r, 'lm.f');
    const p = rVector(r, 'lm.p');
    expect(res.anova.rows.map((x) => x.df)).toEqual(df.slice(0, 2));
    res.anova.rows.forEach((row, i) => {
      expectClose(row.ss, ss[i], 1e-8, 1e-6, `SS ${row.term}`);
      expectClose(row.f, f[i], 1e-8, 1e-6, `F ${row.term}`);
      expectClose(row.p, p[i], 1e-8, 1e-300, `p ${row.term}`);
    });
    expect(res.anova.residual.df).toBe(12);
    expect(res.aliased.length).toBe(1);
    expect(res.aliased[0].term).toBe('treatment');
    expect(res.flags.some((x) => x.code === 'aliased-terms')).toBe(true);
    expect(res.means.every((m) => !m.estimable && m.estimate === null)).toBe(true);
  });

  it('single-df effects: t² equals the aov F of each term (R live, 1e-8) and the published table (printed precision); N:P:K not estimable', () => {
    const aovF = rVector(r, 'aov.f');
    const terms = /terms (.*)/.exec(r.stdout)![1].split('|').map((s) => s.trim());
    for (const c of res.contrasts) {
      if (c.name === 'N:P:K') {
        expect(c.estimable).toBe(false);
        continue;
      }
      const e = c as EstimableContrast;
      const t2 = (e.t as number) ** 2;
      expectClose(t2, aovF[terms.indexOf(c.name)], 1e-8, 1e-6, `F ${c.name}`);
      expect(Math.abs(t2 - PUBLISHED[c.name][2])).toBeLessThan(5e-4); // printed to 3 decimals
    }
  });

  it('block SS, residual SS and treatment SS (sum of the six estimable effect SS) against the published table at 2 decimals', () => {
    const block = res.anova.rows.find((x) => x.term === 'block')!;
    const trt = res.anova.rows.find((x) => x.term === 'treatment')!;
    expect(Math.abs(block.ss - PUBLISHED.block[1])).toBeLessThan(0.005);
    expect(Math.abs(res.anova.residual.ss - PUBLISHED.Residuals[1])).toBeLessThan(0.005);
    const publishedTrt = ['N', 'P', 'K', 'N:P', 'N:K', 'P:K'].reduce((s, k) => s + PUBLISHED[k][1], 0);
    expect(trt.df).toBe(6);
    expect(Math.abs(trt.ss - publishedTrt)).toBeLessThan(6 * 0.005);
    const aovSs = rVector(r, 'aov.ss');
    expectClose(trt.ss, aovSs.slice(1, 7).reduce((s, v) => s + v, 0), 1e-8, 1e-6, 'treatment SS vs sum of aov effect SS');
  });
});
