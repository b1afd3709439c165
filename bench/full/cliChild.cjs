// Child process of bench:full: the installed command itself — the build's own bundle
// (dist/cli/bundle.cjs, what bin/manyfield.cjs runs) — with the arguments given. Prints
// "BENCH {json}" to stderr: time inside the command, its CPU time, and the process's peak
// resident memory (maxRSS). MANYFIELD_BENCH_BUNDLE names another build's bundle (bench:full --baseline).
'use strict';
const cpu0 = process.cpuUsage();
const t0 = performance.now();
const { main } = require(process.env.MANYFIELD_BENCH_BUNDLE || '../../dist/cli/bundle.cjs');
const loaded = performance.now();
main(process.argv.slice(2)).then((code) => {
  const ms = performance.now() - loaded;
  const cpu = process.cpuUsage(cpu0);
  process.stderr.write(`BENCH ${JSON.stringify({ code, totalMs: ms, loadMs: loaded - t0, cpuMs: (cpu.user + cpu.system) / 1000, maxRssMb: process.resourceUsage().maxRSS / 1024 })}\n`);
  process.exitCode = code;
});
