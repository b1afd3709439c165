// Chi-square tails and quantiles used by the new-site bootstrap, live against R's pchisq/qchisq
// (R's stats package, Rmath's algorithms), including the many-df range (pools of thousands of
// trials) where the general incomplete-gamma routine drifts. Tolerances: 1e-10 relative on
// probabilities and quantiles; the fast normal tail table within 1e-8 absolute of the general
// routine (its stated interpolation bound is about 5e-9).
import { beforeAll, describe, expect, it } from 'vitest';
import { chisqQuantile, chisqUpper, normalUpper } from '../../../src/engine/stats/distributions.js';
import { chisqTailQuantile } from '../../../src/engine/stats/chisqTailQuantile.js';
import { normalUpperFast } from '../../../src/engine/stats/normalTailTable.js';
import { quantile7 } from '../../../src/engine/pooling/predictiveDistribution.js';
import { runR, rVector, type RRun } from '../../support/rscript.js';

const dfs = [1, 2, 3, 7, 12, 39, 199, 999, 1001, 2500, 3999, 20000];
const probs = [1e-9, 1e-6, 0.001, 0.025, 0.3, 0.5];
let r: RRun;

beforeAll(() => {
  r = runR(`
    dfs <- c(${dfs.join(',')}); ps <- c(${probs.join(',')})
    g <- expand.grid(p = ps, df = dfs)
    emit("lower", qchisq(g$p, g$df)); emit("upper", qchisq(g$p, g$df, lower.tail = FALSE))
    emit("tail_mid", pchisq(g$df - 2/3, g$df, lower.tail = FALSE))
    emit("tail_far", pchisq(g$df + 5 * sqrt(2 * g$df), g$df, lower.tail = FALSE))
  `);
});

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('chi-square tails against R', () => {
  it('tail quantiles by Newton steps agree with qchisq on both tails, 1 to 20,000 df (1e-10 relative)', () => {
    const lower = rVector(r, 'lower');
    const upper = rVector(r, 'upper');
    let i = 0;
    for (const df of dfs) {
      const q = chisqTailQuantile(df);
      for (const p of probs) {
        expect(rel(q.lower(p), lower[i]), `lower df=${df} p=${p}`).toBeLessThan(1e-10);
        expect(rel(q.upper(p), upper[i]), `upper df=${df} p=${p}`).toBeLessThan(1e-10);
        i++;
      }
    }
  });

  it('chisqUpper and chisqQuantile hold their accuracy above 1,000 df (1e-10 relative)', () => {
    const mid = rVector(r, 'tail_mid');
    const far = rVector(r, 'tail_far');
    const lower = rVector(r, 'lower');
    let i = 0;
    for (const df of dfs) {
      for (const p of probs) {
        expect(rel(chisqUpper(df - 2 / 3, df), mid[i]), `mid df=${df}`).toBeLessThan(1e-10);
        expect(rel(chisqUpper(df + 5 * Math.sqrt(2 * df), df), far[i]), `far df=${df}`).toBeLessThan(1e-9);
        if (df > 1000 && p >= 1e-6) expect(rel(chisqQuantile(p, df), lower[i]), `quantile df=${df} p=${p}`).toBeLessThan(1e-10);
        i++;
      }
    }
  });
});

describe('helpers of the Monte Carlo loop', () => {
  it('the normal tail table is within 1e-8 of the general routine over [-10, 10]', () => {
    for (let z = -10; z <= 10; z += 0.0037) expect(Math.abs(normalUpperFast(z) - normalUpper(z))).toBeLessThan(1e-8);
  });

  it('type-7 quantiles by selection equal those of the sorted sample (ties and small samples included)', () => {
    let seed = 3;
    const next = () => ((seed = (seed * 69069 + 1) >>> 0) / 4294967296);
    for (let t = 0; t < 300; t++) {
      const n = 1 + Math.floor(next() * 200);
      const a = Float64Array.from({ length: n }, () => Math.floor(next() * 20) / 3);
      const s = Float64Array.from(a).sort();
      for (const p of [0, 0.025, 0.5, 0.975, 1, next()]) {
        const h = (n - 1) * p;
        const j = Math.floor(h);
        const expected = s[j] + (h - j) * (s[Math.min(j + 1, n - 1)] - s[j]);
        expect(Math.abs(quantile7(Float64Array.from(a), p) - expected)).toBeLessThan(1e-12);
      }
    }
  });
});
