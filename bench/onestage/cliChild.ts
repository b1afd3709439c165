// Child process of the bench: the project's own command, `manyfield analyze --data F --spec S
// --json`, called through its entry function (the bench bundles this file, so no build step is
// needed). Prints "BENCH {json}" with the command's wall and CPU time to stderr.
import { main } from '../../src/cli/main.js';

const [file, spec] = process.argv.slice(2);
const cpu0 = process.cpuUsage();
const t0 = performance.now();
const code = await main(['analyze', '--data', file, '--spec', spec, '--json']);
const ms = performance.now() - t0;
const cpu = process.cpuUsage(cpu0);
process.stderr.write(`BENCH ${JSON.stringify({ code, totalMs: ms, cpuMs: (cpu.user + cpu.system) / 1000 })}\n`);
process.exitCode = code;
