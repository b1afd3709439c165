// Times the read + network step of `manyfield analyze --data` (not a test: run it by hand).
//   npx tsx test/intake/analysisRead.script.ts [trials=4000] [repeats=7]
// Generates a file shaped like the one-stage bench's (env,block,trt,y: 7 treatments x 4 blocks
// per trial), then alternates fresh processes, each timing one cold read as the command does:
//   table: readDataForAnalysis + networkFromTable (the import path, then a second pass)
//   direct: readNetworkForAnalysis (rows straight into per-trial engine plots)
// Prints sorted wall and main-thread CPU times (CPU is the fairer figure on a shared machine).
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { networkFromTable } from '../../src/api/analysis/networkFromTable.js';
import { mulberry32 } from '../../src/engine/stats/random.js';
import { readDataForAnalysis, readNetworkForAnalysis } from '../../src/intake/index.js';
import { analysisSpecSchema } from '../../src/spec/analysisSpec.js';

const spec = analysisSpecSchema.parse({ trait: 'y', columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y' }, control: 'CTL' });

/** utime + stime of the main thread, in ms (Linux /proc; 0 elsewhere). */
function mainThreadCpuMs(): number {
  try {
    const fields = readFileSync(`/proc/self/task/${process.pid}/stat`, 'utf8').split(') ')[1].split(' ');
    return (Number(fields[11]) + Number(fields[12])) * 10;
  } catch {
    return 0;
  }
}

async function child(which: string, file: string): Promise<void> {
  const c0 = mainThreadCpuMs();
  const t0 = performance.now();
  let plots = 0;
  if (which === 'table') {
    const { table } = await readDataForAnalysis(file, spec);
    for (const t of networkFromTable(table, 'y').trials) plots += t.plots.length;
  } else {
    for (const t of (await readNetworkForAnalysis(file, spec)).network.trials) plots += t.plots.length;
  }
  console.log(JSON.stringify({ wall: performance.now() - t0, cpu: mainThreadCpuMs() - c0, plots }));
}

if (process.argv[2] === '--child') await child(process.argv[3], process.argv[4]);
else {
  const trials = Number(process.argv[2] ?? 4000);
  const repeats = Number(process.argv[3] ?? 7);
  const uniform = mulberry32(11);
  const lines = ['env,block,trt,y'];
  for (let e = 0; e < trials; e++) {
    for (let b = 1; b <= 4; b++) for (const trt of ['CTL', 'T1', 'T2', 'T3', 'T4', 'T5', 'T6']) lines.push(`E${String(e).padStart(4, '0')},B${b},${trt},${(2 + 2 * uniform()).toFixed(6)}`);
  }
  const dir = mkdtempSync(join(tmpdir(), 'manyfield-analysis-read-'));
  const file = join(dir, 'plots.csv');
  writeFileSync(file, `${lines.join('\n')}\n`);
  const self = fileURLToPath(import.meta.url);
  const runs: Record<string, { wall: number; cpu: number }[]> = { table: [], direct: [] };
  for (let k = 0; k < repeats; k++) {
    for (const which of ['table', 'direct']) {
      const r = spawnSync(process.execPath, [...process.execArgv, self, '--child', which, file], { encoding: 'utf8' });
      if (r.status !== 0) throw new Error(r.stderr);
      runs[which].push(JSON.parse(r.stdout.trim().split('\n').pop()!));
    }
  }
  console.log(`${lines.length - 1} rows, ${trials} trials; ${repeats} alternating fresh processes each`);
  for (const [which, rs] of Object.entries(runs)) {
    const sorted = (xs: number[]): string => xs.sort((a, b) => a - b).map((x) => x.toFixed(0)).join(' ');
    console.log(`${which.padEnd(6)} wall ms: ${sorted(rs.map((r) => r.wall))} | main-thread cpu ms: ${sorted(rs.map((r) => r.cpu))}`);
  }
  rmSync(dir, { recursive: true, force: true });
}
