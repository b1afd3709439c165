// The fast refit of the site-and-trial model (Fisher scoring from a warm start) against the
// nested Brent searches of fitSiteTrial (the reference, itself checked against R's dense REML and
// nlme in siteLevelsR.test.ts), on 300 simulated networks including ones whose optimum is on the
// zero boundary. Tolerances: log-likelihood not below the searches' by more than 1e-9 (relative),
// each tau² within 1e-5 of the searches' (relative to tau² + the typical sampling variance: the
// likelihood is flat there), mean and its variance within 1e-6 relative.
import { describe, expect, it } from 'vitest';
import { fitSiteTrial } from '../../../../src/engine/pooling/multilevel/fitSiteTrial.js';
import { scoreSiteTrial } from '../../../../src/engine/pooling/multilevel/siteTrialScoring.js';
import type { SiteGroup } from '../../../../src/engine/pooling/multilevel/siteTrialLikelihood.js';
import { mulberry32, normalSampler } from '../../../../src/engine/stats/random.js';

function network(seed: number): { groups: SiteGroup[]; site: number; trial: number } {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const sites = 4 + Math.floor(u() * 20);
  const site = [0, 0.05, 0.3][seed % 3];
  const trial = [0, 0.1, 0.4][Math.floor(seed / 3) % 3];
  const groups: SiteGroup[] = [];
  for (let s = 0; s < sites; s++) {
    const a = Math.sqrt(site) * z();
    const n = 1 + Math.floor(u() * 5);
    const v = Float64Array.from({ length: n }, () => (0.1 + 0.7 * u()) ** 2);
    groups.push({ site: `s${s}`, trials: v.map((_, j) => j).join(',').split(','), v, y: Float64Array.from(v, (vi) => 1 + a + Math.sqrt(trial) * z() + Math.sqrt(vi) * z()) });
  }
  return { groups, site, trial };
}

describe('site-and-trial refit by Fisher scoring', () => {
  for (const kind of ['reml', 'ml'] as const)
    it(`finds the searches' optimum from the generating values (${kind}, 150 networks)`, () => {
      let boundary = 0;
      for (let seed = 1; seed <= 150; seed++) {
        const { groups, site, trial } = network(seed);
        const ref = fitSiteTrial(groups, kind);
        const fast = scoreSiteTrial(groups, kind, site, trial);
        expect(fast).not.toBeNull();
        const f = fast!;
        const scale = 0.25;
        expect(f.logLik).toBeGreaterThanOrEqual(ref.logLik - 1e-9 * Math.abs(ref.logLik));
        expect(Math.abs(f.siteTau2 - ref.siteTau2)).toBeLessThanOrEqual(1e-5 * (ref.siteTau2 + scale));
        expect(Math.abs(f.trialTau2 - ref.trialTau2)).toBeLessThanOrEqual(1e-5 * (ref.trialTau2 + scale));
        expect(Math.abs(f.mu - ref.mu)).toBeLessThanOrEqual(1e-6 * (Math.abs(ref.mu) + Math.sqrt(ref.muVariance)));
        expect(Math.abs(f.muVariance - ref.muVariance)).toBeLessThanOrEqual(1e-6 * ref.muVariance);
        if (ref.siteTau2 === 0 || ref.trialTau2 === 0) boundary++;
      }
      // the set includes optima on the zero boundary, where scoring must stop at zero
      expect(boundary).toBeGreaterThan(20);
    });
});
