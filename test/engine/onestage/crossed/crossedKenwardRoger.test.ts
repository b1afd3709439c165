// The pieces behind the crossed model's Kenward–Roger df that pbkrtest cannot see on its own:
// H^-1 read as E - U U' (crossedInverseParts.ts) against H built plot by plot from the terms'
// definitions and inverted by a dense Cholesky (to 1e-12 relative), with and without site terms;
// and the fallbacks to Satterthwaite, each with a warning saying why. (The df and adjusted SEs
// themselves are checked live against pbkrtest in kenwardRogerR.test.ts.)
import { describe, expect, it } from 'vitest';
import { crossedData } from '../../../../src/engine/onestage/crossed/crossedData.js';
import { crossedLayout } from '../../../../src/engine/onestage/crossed/crossedLayout.js';
import { evaluateCrossed } from '../../../../src/engine/onestage/crossed/crossedLikelihood.js';
import { applyHInverse, inverseParts, largestBlock } from '../../../../src/engine/onestage/crossed/crossedInverseParts.js';
import { kenwardRogerOrWarn } from '../../../../src/engine/onestage/crossed/crossedKenwardRoger.js';
import { backSolveTranspose, choleskyInPlace, forwardSolve } from '../../../../src/engine/onestage/crossed/denseSmall.js';
import type { CrossedTerm } from '../../../../src/engine/onestage/crossed/terms.js';
import { simulateCrossed } from './support/simulateCrossed.js';

const ALL: CrossedTerm[] = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];

function setUp(terms: CrossedTerm[]) {
  const sim = simulateCrossed({ seed: 404, sites: 7, years: 4, runProbability: 0.7, missing: 0.06 });
  const d = crossedData(sim.network, terms, false);
  const L = crossedLayout(d, terms, false);
  const theta = terms.map((_, k) => 0.4 + 0.3 * k);
  const ev = evaluateCrossed(d, L, theta)!;
  return { d, L, ev, theta };
}

describe('H^-1 as E - U U\'', () => {
  for (const terms of [ALL, ['trial', 'block', 'treatment-by-year', 'treatment-by-trial'] as CrossedTerm[]]) {
    it(`equals the dense inverse of H (${terms.join(', ')})`, () => {
      const { d, L, ev, theta } = setUp(terms);
      const parts = inverseParts(d, L, ev);
      const n = parts.n;
      expect(n).toBe(d.nObservations);
      // H = I + sum_k theta_k² Z_k Z_k', plot by plot from what each term shares
      const g = (t: CrossedTerm) => (L.at[t] >= 0 ? theta[L.at[t]] ** 2 : 0);
      const plot = (a: number) => {
        const i = parts.trialOf[a];
        const tr = d.trials[i];
        const c = parts.plotInTrial[a];
        return { i, site: tr.site, year: tr.year, j: tr.treatment[c], b: tr.block[c] };
      };
      const h = new Float64Array(n * n);
      for (let a = 0; a < n; a++)
        for (let b = 0; b < n; b++) {
          const x = plot(a);
          const y = plot(b);
          let v = a === b ? 1 : 0;
          if (x.site === y.site) v += g('site') + (x.j === y.j ? g('treatment-by-site') : 0);
          if (x.year === y.year) v += g('year') + (x.j === y.j ? g('treatment-by-year') : 0);
          if (x.i === y.i) v += g('trial') + (x.j === y.j ? g('treatment-by-trial') : 0) + (x.b >= 0 && x.b === y.b ? g('block') : 0);
          h[a * n + b] = v;
        }
      expect(choleskyInPlace(h, n)).toBe(true);
      const x = Float64Array.from({ length: n * 2 }, (_, i) => Math.sin(1 + i) + (i % 3));
      const ours = applyHInverse(parts, x, 2);
      for (let c = 0; c < 2; c++) {
        const col = Float64Array.from({ length: n }, (_, a) => x[a * 2 + c]);
        forwardSolve(h, n, n, col);
        backSolveTranspose(h, n, n, col);
        let scale = 0;
        let diff = 0;
        for (let a = 0; a < n; a++) {
          scale = Math.max(scale, Math.abs(col[a]));
          diff = Math.max(diff, Math.abs(col[a] - ours[a * 2 + c]));
        }
        expect(diff / scale).toBeLessThan(1e-12);
      }
    });
  }
});

describe('Kenward–Roger fallbacks', () => {
  it('refuses a residual per trial, with a warning', () => {
    const { d, L, ev } = setUp(ALL);
    const warnings: string[] = [];
    expect(kenwardRogerOrWarn(d, L, ev, true, warnings)).toBeNull();
    expect(warnings).toEqual([expect.stringMatching(/residual per trial: Satterthwaite df are given instead/)]);
  });
  it('refuses a site larger than the dense limit, naming its size and the limit', () => {
    const { d, L, ev } = setUp(ALL);
    const largest = largestBlock(d, L);
    const warnings: string[] = [];
    expect(kenwardRogerOrWarn(d, L, ev, false, warnings, largest - 1)).toBeNull();
    expect(warnings).toEqual([`Kenward–Roger df need a dense block of ${largest} x ${largest} for the largest site (limit ${largest - 1} plots): Satterthwaite df are given instead`]);
    expect(kenwardRogerOrWarn(d, L, ev, false, [], largest)).not.toBeNull();
  });
});
