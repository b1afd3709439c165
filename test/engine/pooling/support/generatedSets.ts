// Generated pooling inputs for property tests (fast-check): k estimates with sampling variances
// over a wide range of scales, spread between trials from none to large.
import fc from 'fast-check';

export interface GeneratedSet {
  readonly y: number[];
  readonly v: number[];
}

export function generatedSets(limits: { readonly maxK: number; readonly maxLogScale: number; readonly maxSpread: number }): fc.Arbitrary<GeneratedSet> {
  return fc
    .record({
      k: fc.integer({ min: 2, max: limits.maxK }),
      logScale: fc.double({ min: -limits.maxLogScale, max: limits.maxLogScale, noNaN: true }),
      seed: fc.integer({ min: 1, max: 1_000_000 }),
      spread: fc.double({ min: 0, max: limits.maxSpread, noNaN: true }),
    })
    .map(({ k, logScale, seed, spread }) => {
      let a = seed;
      const u = () => ((a = (a * 16807) % 2147483647) / 2147483647);
      const scale = 10 ** logScale;
      const v = Array.from({ length: k }, () => (scale * (0.05 + 3 * u())) ** 2);
      const y = v.map((vi) => scale * spread * (u() - 0.5) + Math.sqrt(vi) * (u() - 0.5) * 3);
      return { y, v };
    });
}
