// Child process of the bench: the installed command itself — the build's own bundle
// (dist/cli/bundle.cjs, what bin/manyfield.cjs runs) — as `manyfield analyze --data F --spec S
// --json`. Prints "BENCH {json}" with the time inside the command and its CPU time to stderr.
'use strict';
const cpu0 = process.cpuUsage();
const t0 = performance.now();
const { main } = require('../../dist/cli/bundle.cjs');
const loaded = performance.now();
const [file, spec] = process.argv.slice(2);
main(['analyze', '--data', file, '--spec', spec, '--json']).then((code) => {
  const ms = performance.now() - loaded;
  const cpu = process.cpuUsage(cpu0);
  process.stderr.write(`BENCH ${JSON.stringify({ code, totalMs: ms, loadMs: loaded - t0, cpuMs: (cpu.user + cpu.system) / 1000 })}\n`);
  process.exitCode = code;
});
