// Small plot files for command tests: sites x one year x two blocks x a control and two rates.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';

export const MAPPING_JSON = JSON.stringify({
  columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield', factors: { rate: 'rate' } },
  trait: { name: 'yield', unit: 't/ha', lower: 0 },
  control: 'CTL',
  factorUnits: { rate: 'kg/ha' },
});

/** Writes a plot file; `rate` is the rate of A1 (A2 has twice it); `shift` moves every yield. */
export function writePlotFile(dir: string, name: string, sites: readonly string[], rate = 40, shift = 0): string {
  const lines = ['site,year,block,trt,rate,yield'];
  let k = 0;
  for (const site of sites) {
    for (const block of [1, 2]) {
      for (const [trt, r] of [['CTL', 0], ['A1', rate], ['A2', 2 * rate]] as const) {
        lines.push(`${site},2021,${block},${trt},${r},${(5 + r / 100 + ((k++ * 7) % 5) / 10 + shift).toFixed(2)}`);
      }
    }
  }
  const file = join(dir, name);
  writeFileSync(file, `${lines.join('\n')}\n`);
  return file;
}

export function writeMapping(dir: string): string {
  const file = join(dir, 'mapping.json');
  writeFileSync(file, MAPPING_JSON);
  return file;
}
