// Child process of the bench: the installed command itself — the build's own bundle
// (dist/cli/bundle.mjs, what bin/manyfield.js runs) — as `manyfield analyze --data F --spec S
// --json`. Prints "BENCH {json}" with the time inside the command and its CPU time to stderr.
const cpu0 = process.cpuUsage();
const t0 = performance.now();
const { main } = await import('../../dist/cli/bundle.mjs');
const loaded = performance.now();
const [file, spec] = process.argv.slice(2);
const code = await main(['analyze', '--data', file, '--spec', spec, '--json']);
const ms = performance.now() - loaded;
const cpu = process.cpuUsage(cpu0);
process.stderr.write(`BENCH ${JSON.stringify({ code, totalMs: ms, loadMs: loaded - t0, cpuMs: (cpu.user + cpu.system) / 1000 })}\n`);
process.exitCode = code;
