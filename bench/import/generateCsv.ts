// A generated plot file for the import benchmark: many site-years, an untreated control plus
// three rates x two timings (7 treatments), 4 randomised complete blocks, one yield column.
import { createWriteStream } from 'node:fs';
import { once } from 'node:events';
import { mulberry32 } from '../../src/engine/stats/random.js';
import type { ImportMapping } from '../../src/intake/types.js';

const TREATMENTS: readonly [code: string, rate: string, timing: string][] = [
  ['CTL', '0', ''],
  ['A1', '40', 'early'],
  ['A2', '80', 'early'],
  ['A4', '160', 'early'],
  ['B1', '40', 'late'],
  ['B2', '80', 'late'],
  ['B4', '160', 'late'],
];
export const PLOTS_PER_TRIAL = TREATMENTS.length * 4;

export const BENCH_MAPPING: ImportMapping = {
  columns: {
    site: 'site',
    year: 'year',
    trial: 'env',
    block: 'block',
    treatment: 'trt',
    response: 'yield',
    factors: { rate: 'rate', timing: 'timing' },
  },
  trait: { name: 'yield', unit: 't/ha' },
  control: 'CTL',
  factorUnits: { rate: 'kg/ha' },
};

/** Write `rows` plot rows (whole trials, the last one cut short if needed); returns rows written. */
export async function writePlotCsv(path: string, rows: number, seed = 20261201): Promise<number> {
  const rand = mulberry32(seed);
  const out = createWriteStream(path);
  out.write('site,year,env,block,trt,rate,timing,yield\n');
  const trials = Math.ceil(rows / PLOTS_PER_TRIAL);
  const sites = Math.max(1, Math.ceil(trials / 8));
  let written = 0;
  let chunk = '';
  for (let k = 0; k < trials && written < rows; k++) {
    const site = `S${String(k % sites).padStart(5, '0')}`;
    const year = 2000 + Math.floor(k / sites);
    const env = `${site}-${year}`;
    const base = 3 + 5 * rand();
    for (let b = 1; b <= 4 && written < rows; b++) {
      for (const [code, rate, timing] of TREATMENTS) {
        if (written === rows) break;
        const y = (base + Number(rate) / 80 + 0.6 * (rand() - 0.5)).toFixed(3);
        chunk += `${site},${year},${env},${b},${code},${rate},${timing},${y}\n`;
        written++;
      }
    }
    if (chunk.length > 1 << 20) {
      if (!out.write(chunk)) await once(out, 'drain');
      chunk = '';
    }
  }
  out.end(chunk);
  await once(out, 'finish');
  return written;
}
