// The crossed site-year likelihood's analytic gradient and average information (crossedYearScore.ts)
// against (a) central finite differences of crossedLogLik (step 1e-5 on variances of 0.05-0.4:
// agreement to 1e-6 relative to the gradient's scale) and (b) the textbook dense formulas written
// out here with the full V, its inverse and P = V⁻¹ - V⁻¹1(1'V⁻¹1)⁻¹1'V⁻¹ (REML; ML: V⁻¹ in the
// trace): d/dθk = -1/2 tr(P Vk) + 1/2 y'P Vk P y, AI_kl = 1/2 y'P Vk P Vl P y (both kinds; to 1e-9 relative),
// on random networks with gaps and at the zero boundary of each variance. The logLik must equal
// crossedLogLik's to 1e-12 relative.
import { describe, expect, it } from 'vitest';
import { crossedLogLik, type CrossedGroup } from '../../../../src/engine/pooling/multilevel/crossedYearLikelihood.js';
import { crossedScore } from '../../../../src/engine/pooling/multilevel/crossedYearScore.js';
import { spdInverse } from '../../../../src/engine/linalg/cholesky.js';
import { zeros, type Matrix } from '../../../../src/engine/linalg/matrix.js';
import { mulberry32, normalSampler } from '../../../../src/engine/stats/random.js';

const YEARS = 5;

function network(seed: number): CrossedGroup[] {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const groups: CrossedGroup[] = [];
  for (let s = 0; s < 6 + (seed % 5); s++) {
    const ran = Array.from({ length: YEARS }, (_, a) => a).filter(() => u() < 0.6);
    if (ran.length === 0) ran.push(s % YEARS);
    const v = Float64Array.from(ran, () => 0.05 + 0.3 * u());
    groups.push({ site: `s${s}`, trials: ran.map(String), yearIndex: Int32Array.from(ran), v, y: Float64Array.from(ran, () => 1 + z()) });
  }
  return groups;
}

/** Dense gradient and AI from the full matrices, in the order [year, site, trial]. */
function dense(groups: CrossedGroup[], x: readonly number[], kind: 'reml' | 'ml') {
  const rows = groups.flatMap((g, s) => [...g.y].map((y, j) => ({ y, v: g.v[j], s, a: g.yearIndex[j] })));
  const n = rows.length;
  const same = (k: number, i: number, j: number) => (k === 0 ? rows[i].a === rows[j].a : k === 1 ? rows[i].s === rows[j].s : i === j);
  const V: Matrix = zeros(n, n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) V.data[i * n + j] = (i === j ? rows[i].v : 0) + [0, 1, 2].reduce((s, k) => s + (same(k, i, j) ? x[k] : 0), 0);
  const Vi = spdInverse(V).data;
  const v1 = Array.from({ length: n }, (_, i) => rows.reduce((s, _r, j) => s + Vi[i * n + j], 0));
  const c = v1.reduce((s, a) => s + a, 0);
  const P = Float64Array.from({ length: n * n }, (_, ij) => Vi[ij] - (v1[Math.floor(ij / n)] * v1[ij % n]) / c);
  const T = kind === 'reml' ? P : Vi;
  const Py = Array.from({ length: n }, (_, i) => rows.reduce((s, r, j) => s + P[i * n + j] * r.y, 0));
  const VkPy = [0, 1, 2].map((k) => Array.from({ length: n }, (_, i) => rows.reduce((s, _r, j) => s + (same(k, i, j) ? Py[j] : 0), 0)));
  const gradient = [0, 1, 2].map((k) => {
    let tr = 0;
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (same(k, i, j)) tr += T[i * n + j];
    return -0.5 * tr + 0.5 * VkPy[k].reduce((s, a, i) => s + a * Py[i], 0);
  });
  const information = [0, 1, 2].flatMap((k) => [0, 1, 2].map((l) => {
    let s = 0;
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) s += VkPy[k][i] * P[i * n + j] * VkPy[l][j];
    return 0.5 * s;
  }));
  return { gradient, information };
}

const points: [number, number, number][] = [[0.2, 0.1, 0.05], [0, 0.3, 0.1], [0.15, 0, 0.2], [0.1, 0.2, 0], [0.4, 0.05, 0.3]];

describe('crossed site-year score (gradient and average information)', () => {
  for (const kind of ['reml', 'ml'] as const)
    it(`${kind}: matches finite differences and the dense formulas`, () => {
      for (let seed = 1; seed <= 4; seed++) {
        const groups = network(seed);
        for (const x of points) {
          const sc = crossedScore(groups, YEARS, x[1], x[2], x[0], kind);
          const ll = (p: readonly number[]) => crossedLogLik(groups, YEARS, p[1], p[2], p[0], kind).logLik;
          expect(Math.abs(sc.logLik - ll(x)) / Math.abs(ll(x))).toBeLessThan(1e-12);
          const d = dense(groups, x, kind);
          const gScale = Math.max(...d.gradient.map(Math.abs), 1);
          const aiScale = Math.max(...d.information.map(Math.abs));
          for (let k = 0; k < 3; k++) {
            expect(Math.abs(sc.gradient[k] - d.gradient[k]) / gScale).toBeLessThan(1e-9);
            // central differences (kept above zero)
            const h = 1e-5;
            const up = [...x];
            const down = [...x];
            up[k] += h;
            down[k] += x[k] >= h ? -h : 0;
            const fd = (ll(up) - ll(down)) / (up[k] - down[k]);
            // forward differences at zero are accurate to h times the curvature only
            expect(Math.abs(sc.gradient[k] - fd) / gScale).toBeLessThan(x[k] >= h ? 1e-6 : 1e-3);
          }
          for (let i = 0; i < 9; i++) expect(Math.abs(sc.information[i] - d.information[i]) / aiScale).toBeLessThan(1e-9);
        }
      }
    });
});
