// An invented network whose protocol changes over the years, as real programmes do:
// 2019–20 a narrow early-timing rate set, 2021–22 a wider one, 2023–24 a late timing added at
// two rates; some trials drop treatments (the top rate, the middle rates, the control, one late
// rate) and one plot has no value. Invented data for simulation tests; the numbers are checked
// against R on this file, never against values copied from our own output.
import { mulberry32 } from '../../src/engine/stats/random.js';

type Treatment = readonly [code: string, rate: number, timing: '' | 'early' | 'late'];

const P1: readonly Treatment[] = [['CTL', 0, ''], ['E50', 50, 'early'], ['E100', 100, 'early'], ['E150', 150, 'early']];
const P2: readonly Treatment[] = [['CTL', 0, ''], ['E60', 60, 'early'], ['E120', 120, 'early'], ['E180', 180, 'early'], ['E240', 240, 'early']];
const P3: readonly Treatment[] = [['CTL', 0, ''], ['E60', 60, 'early'], ['E120', 120, 'early'], ['E180', 180, 'early'], ['L60', 60, 'late'], ['L120', 120, 'late']];

export const PROTOCOLS: Readonly<Record<number, readonly Treatment[]>> = { 2019: P1, 2020: P1, 2021: P2, 2022: P2, 2023: P3, 2024: P3 };

/** Treatments each trial dropped (trial = site-year). */
export const DROPPED: Readonly<Record<string, readonly string[]>> = {
  'S1-2019': ['E100', 'E150'], // two distinct rates left: no quadratic trend
  'S2-2020': ['E150'], // the top rate dropped
  'S3-2022': ['E120', 'E180'],
  'S3-2023': ['CTL'], // no control: no treated-against-control
  'S1-2024': ['L120'], // early against late at 60 only
};

/** A plot without a value (unbalanced blocks). */
export const EMPTY = { trial: 'S2-2021', block: 2, trt: 'E120' };

export function protocolChangeCsv(seed: number): string {
  const u = mulberry32(seed);
  const normal = (): number => Math.sqrt(-2 * Math.log(u() + 1e-12)) * Math.cos(2 * Math.PI * u());
  const lines = ['env,site,year,block,plot,trt,rate,timing,y'];
  for (const year of [2019, 2020, 2021, 2022, 2023, 2024]) {
    for (const site of ['S1', 'S2', 'S3']) {
      const env = `${site}-${year}`;
      const level = 6 + normal() * 0.8;
      const gain = 3 + normal() * 0.5;
      const treatments = PROTOCOLS[year].filter(([code]) => !(DROPPED[env] ?? []).includes(code));
      for (let block = 1; block <= 4; block++) {
        const blockEffect = 0.3 * normal();
        treatments.forEach(([code, rate, timing], k) => {
          const x = rate * (timing === 'late' ? 1.15 : 1);
          const y = level + gain * (1 - Math.exp(-0.01 * x)) + blockEffect + 0.4 * normal();
          const empty = env === EMPTY.trial && block === EMPTY.block && code === EMPTY.trt;
          lines.push(`${env},${site},${year},${block},${block * 100 + k + 1},${code},${rate},${timing},${empty ? '' : y.toFixed(6)}`);
        });
      }
    }
  }
  return `${lines.join('\n')}\n`;
}

/** How an analysis spec reads this file: its columns, trait and control. */
export const PROTOCOL_SPEC_BASE = {
  trait: 'y',
  columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y', factors: { rate: 'rate', timing: 'timing' } },
  control: 'CTL',
} as const;

/** The contrasts the tests on this file ask for, by name. */
export const PROTOCOL_CONTRASTS = {
  rateLinear: { name: 'rate_linear', trend: 'rate', degree: 1 },
  rateQuadratic: { name: 'rate_quadratic', trend: 'rate', degree: 2 },
  treatedVsControl: { name: 'treated_vs_control', kind: 'treated-vs-control' },
  earlyVsLate: { name: 'early_vs_late', factor: 'timing', levels: ['early', 'late'] },
  e60VsControl: { name: 'e60_vs_control', coefficients: { E60: 1, CTL: -1 }, divisor: 1 },
} as const;
