// Import benchmark: generate a plot CSV of N rows (default 1,000,000), read it with the intake
// reader and store it in a fresh workspace, and print rows per second against the target of
// 200,000 rows/s end to end. Run: npx tsx bench/import/run.ts [rows]
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import path from 'node:path';
import { readPlotFile } from '../../src/intake/readPlotFile.js';
import { counts, importParsedTable, openWorkspace } from '../../src/store/index.js';
import { BENCH_MAPPING, writePlotCsv } from './generateCsv.js';
import { progressBar } from './progressBar.js';

const TARGET_ROWS_PER_SECOND = 200_000;

function rate(rows: number, ms: number): string {
  return Math.round(rows / (ms / 1000)).toLocaleString('en-US').padStart(11);
}

function cpuMs(u: NodeJS.CpuUsage): number {
  return (u.user + u.system) / 1000;
}

async function main(): Promise<void> {
  const requested = Number(process.argv[2] ?? 1_000_000);
  if (!Number.isInteger(requested) || requested < 1) throw new Error(`rows must be a positive integer, got "${process.argv[2]}"`);
  const dir = mkdtempSync(path.join(tmpdir(), 'manyfield-bench-import-'));
  const csv = path.join(dir, 'plots.csv');
  const workspace = path.join(dir, 'bench.manyfield');
  const bar = progressBar();
  try {
    let t = performance.now();
    const rows = await writePlotCsv(csv, requested);
    const genMs = performance.now() - t;
    console.log(`generated ${rows.toLocaleString('en-US')} plot rows (${(statSync(csv).size / 1e6).toFixed(1)} MB) in ${(genMs / 1000).toFixed(2)} s`);

    t = performance.now();
    let cpu = process.cpuUsage();
    const table = await readPlotFile(csv, BENCH_MAPPING, { onProgress: (f) => bar.update('read', f) });
    const readMs = performance.now() - t;
    const readCpuMs = cpuMs(process.cpuUsage(cpu));
    cpu = process.cpuUsage();

    t = performance.now();
    const ws = openWorkspace(workspace, { create: true });
    let stored;
    try {
      importParsedTable(ws, table, { onProgress: (done, total) => bar.update('store', done / total) });
      stored = counts(ws);
    } finally {
      ws.close(); // closing checkpoints the WAL into the file: part of the cost of storing
    }
    const storeMs = performance.now() - t;
    const storeCpuMs = cpuMs(process.cpuUsage(cpu));
    bar.done();
    if (stored.plots !== rows || stored.observations !== rows) throw new Error(`stored ${stored.plots} plots / ${stored.observations} observations, expected ${rows}`);

    const totalMs = readMs + storeMs;
    const total = rows / (totalMs / 1000);
    console.log(`trials ${stored.trials.toLocaleString('en-US')}, plots ${stored.plots.toLocaleString('en-US')}, observations ${stored.observations.toLocaleString('en-US')}`);
    console.log(`read   ${(readMs / 1000).toFixed(2).padStart(6)} s ${rate(rows, readMs)} rows/s`);
    console.log(`store  ${(storeMs / 1000).toFixed(2).padStart(6)} s ${rate(rows, storeMs)} rows/s`);
    console.log(`total  ${(totalMs / 1000).toFixed(2).padStart(6)} s ${rate(rows, totalMs)} rows/s`);
    console.log(`cpu    read ${(readCpuMs / 1000).toFixed(2)} s + store ${(storeCpuMs / 1000).toFixed(2)} s = ${rate(rows, readCpuMs + storeCpuMs).trim()} rows per CPU-second (less sensitive to other load)`);
    console.log(`ratio to target (${TARGET_ROWS_PER_SECOND.toLocaleString('en-US')} rows/s): ${(total / TARGET_ROWS_PER_SECOND).toFixed(2)}${total >= TARGET_ROWS_PER_SECOND ? ' (meets target)' : ' (BELOW target)'}`);
    console.log(`machine load average at the end (1 min): ${loadavg()[0].toFixed(2)} — other processes slow the run down`);
  } finally {
    bar.done();
    rmSync(dir, { recursive: true, force: true });
  }
}

main().catch((err: unknown) => {
  console.error(err instanceof Error ? err.message : err);
  process.exitCode = 1;
});
