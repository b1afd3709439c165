// ptukey / qtukey (Copenhaver & Holland 1988 scheme) against R's ptukey / qtukey (stats),
// live. Tolerances: P to 1e-11 absolute (both are Gauss–Legendre quadratures of the same
// integrals); our quantile q must give R's ptukey(q) = p to 1e-10, and agree with R's
// qtukey to 1e-4 (R stops its secant iteration at 1e-4).
import { describe, it, beforeAll, expect } from 'vitest';
import { ptukey, qtukey } from '../../../src/engine/trial/studentizedRange.js';
import { gaussLegendreHalf } from '../../../src/engine/trial/gaussLegendre.js';
import { holmAdjust } from '../../../src/engine/trial/holm.js';
import { runR, rVector, type RRun } from '../../support/rscript.js';

const grid: [number, number, number][] = [];
for (const means of [2, 3, 5, 10, 20]) for (const df of [2, 3, 7, 12, 30, 120, 1000, 30000]) for (const q of [0.3, 1.5, 3, 4.5, 7]) grid.push([q, means, df]);
const qgrid: [number, number, number][] = [];
for (const p of [0.9, 0.95, 0.99]) for (const means of [2, 4, 7, 12]) for (const df of [3, 10, 24, 200]) qgrid.push([p, means, df]);

describe('studentised range distribution vs R', () => {
  let r: RRun;
  const ourQ = qgrid.map(([p, m, df]) => qtukey(p, m, df));
  const pv = [0.01, 0.04, 0.03, 0.2, 0.005, 0.5, 0.049];
  beforeAll(() => {
    r = runR(
      `g <- read.csv("g.csv"); emit("p", ptukey(g$q, g$m, g$df))
       h <- read.csv("h.csv"); emit("q", qtukey(h$p, h$m, h$df)); emit("pq", ptukey(h$ours, h$m, h$df))
       emit("holm", p.adjust(c(${pv.join(',')}), "holm"))`,
      {
        'g.csv': 'q,m,df\n' + grid.map((g) => g.join(',')).join('\n') + '\n',
        'h.csv': 'p,m,df,ours\n' + qgrid.map((g, i) => [...g, ourQ[i].toPrecision(17)].join(',')).join('\n') + '\n',
      },
    );
  });
  it('ptukey over a grid of q, number of means and df (incl. df > 25000) to 1e-11 absolute', () => {
    const ref = rVector(r, 'p');
    grid.forEach(([q, m, df], i) => expect(Math.abs(ptukey(q, m, df) - ref[i]), `q=${q} m=${m} df=${df}`).toBeLessThan(1e-11));
  });
  it('qtukey inverts R ptukey to 1e-10 and matches R qtukey to 1e-4', () => {
    const q = rVector(r, 'q');
    const pq = rVector(r, 'pq');
    qgrid.forEach(([p], i) => {
      expect(Math.abs(pq[i] - p)).toBeLessThan(1e-10);
      expect(Math.abs(ourQ[i] - q[i])).toBeLessThan(1e-4);
    });
  });
  it("Holm adjustment equals R's p.adjust(method = 'holm') to 1e-15", () => {
    const ref = rVector(r, 'holm');
    holmAdjust(pv).forEach((v, i) => expect(Math.abs(v - ref[i])).toBeLessThan(1e-15));
  });
  it('Gauss–Legendre rules integrate polynomials of degree 2m - 1 exactly (1e-14), property of the rule', () => {
    for (const m of [12, 16]) {
      const { nodes, weights } = gaussLegendreHalf(m);
      for (let deg = 0; deg <= 2 * m - 1; deg += 2) {
        const s = 2 * nodes.reduce((acc, x, i) => acc + weights[i] * x ** deg, 0);
        expect(Math.abs(s - 2 / (deg + 1))).toBeLessThan(1e-14);
      }
    }
  });
  it('classic table value: q(0.95; 3 means, 10 df) = 3.877 (Harter 1960 tables, recalled from memory; 3 decimals)', () => {
    expect(Math.abs(qtukey(0.95, 3, 10) - 3.877)).toBeLessThan(5e-4);
  });
});
