// A seeded generator for Monte Carlo inside the engine (the new-site predictive distribution):
// xoshiro128** (Blackman & Vigna 2018, "Scrambled linear pseudorandom number generators"),
// state filled from the seed by splitmix32. 2^128 - 1 period, passes the usual batteries, and
// small enough to rewrite in any language, so a run can be repeated exactly from its seed.

export interface RandomStream {
  /** Uniform on [0, 1), 53 random bits. */
  uniform(): number;
  /** Standard normal (polar Box–Muller, the spare value kept). */
  normal(): number;
  /** Student's t on `df` degrees of freedom (Bailey 1994, Math Comp 62:779-781, polar method). */
  studentT(df: number): number;
}

function splitmix32(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x9e3779b9) >>> 0;
    let z = s;
    z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
    z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
    return (z ^ (z >>> 16)) >>> 0;
  };
}

export function xoshiro128(seed: number): RandomStream {
  const init = splitmix32(seed);
  let a = init();
  let b = init();
  let c = init();
  let d = init();
  if ((a | b | c | d) === 0) a = 1;
  const next32 = (): number => {
    const result = Math.imul(rotl(Math.imul(b, 5), 7), 9) >>> 0;
    const t = b << 9;
    c ^= a;
    d ^= b;
    b ^= c;
    a ^= d;
    c ^= t;
    d = rotl(d, 11);
    return result;
  };
  const uniform = (): number => ((next32() >>> 5) * 67108864 + (next32() >>> 6)) / 9007199254740992;
  let spare: number | null = null;
  const normal = (): number => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    for (;;) {
      const u = 2 * uniform() - 1;
      const v = 2 * uniform() - 1;
      const s = u * u + v * v;
      if (s > 0 && s < 1) {
        const f = Math.sqrt((-2 * Math.log(s)) / s);
        spare = v * f;
        return u * f;
      }
    }
  };
  const studentT = (df: number): number => {
    for (;;) {
      const u = 2 * uniform() - 1;
      const v = 2 * uniform() - 1;
      const w = u * u + v * v;
      if (w > 0 && w < 1) return u * Math.sqrt((df * (Math.pow(w, -2 / df) - 1)) / w);
    }
  };
  return { uniform, normal, studentT };
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}
