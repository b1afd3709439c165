// Measures readPlotFile throughput on a generated plot file (not a test: run it by hand).
//   npx tsx test/intake/throughput.script.ts [rows=1000000]
// Prints wall-clock rows/s and rows per second of main-thread CPU time (the latter is the
// fairer figure on a machine shared with other work).
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { readPlotFile } from '../../src/intake/index.js';
import type { ImportMapping } from '../../src/intake/types.js';
import { mulberry32 } from '../../src/engine/stats/random.js';

const rows = Number(process.argv[2] ?? 1_000_000);
const treatments = [['CTL', '', ''], ['A1', '40', 'early'], ['A2', '80', 'early'], ['A4', '160', 'early'], ['B1', '40', 'late'], ['B2', '80', 'late'], ['B4', '160', 'late']];
const uniform = mulberry32(7);
const lines = ['site,year,block,trt,rate,timing,yield,ph'];
outer: for (let s = 0; ; s++) {
  for (const year of [2019, 2020, 2021, 2022]) {
    for (let b = 1; b <= 4; b++) {
      for (const [code, rate, timing] of treatments) {
        if (lines.length > rows) break outer;
        lines.push(`S${s},${year},${b},${code},${rate},${timing},${(5 + uniform() * 3).toFixed(3)},${(5.5 + (s % 10) / 10).toFixed(1)}`);
      }
    }
  }
}
const dir = mkdtempSync(join(tmpdir(), 'manyfield-throughput-'));
const file = join(dir, 'plots.csv');
writeFileSync(file, `${lines.join('\n')}\n`);
const mapping: ImportMapping = {
  columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield', factors: { rate: 'rate', timing: 'timing' }, covariates: ['ph'] },
  trait: { name: 'yield', unit: 't/ha' },
  control: 'CTL',
  factorUnits: { rate: 'kg/ha' },
};
/** utime + stime of the main thread, in seconds (Linux /proc; 0 elsewhere). */
function mainThreadCpu(): number {
  try {
    const fields = readFileSync(`/proc/self/task/${process.pid}/stat`, 'utf8').split(') ')[1].split(' ');
    return (Number(fields[11]) + Number(fields[12])) / 100;
  } catch {
    return 0;
  }
}
const cpu0 = mainThreadCpu();
const t0 = performance.now();
const table = await readPlotFile(file, mapping);
const wall = (performance.now() - t0) / 1000;
const cpu = mainThreadCpu() - cpu0;
console.log(`${table.rowsRead} rows (${(readFileSync(file).length / 1e6).toFixed(1)} MB), ${table.trials.length} trials`);
console.log(`wall ${wall.toFixed(2)} s = ${Math.round(table.rowsRead / wall)} rows/s`);
if (cpu > 0) console.log(`main-thread cpu ${cpu.toFixed(2)} s = ${Math.round(table.rowsRead / cpu)} rows/s`);
rmSync(dir, { recursive: true, force: true });
