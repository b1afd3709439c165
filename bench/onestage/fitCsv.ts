// Child process of the bench: read one CSV, fit the one-stage model, print the JSON result.
// Prints one line "BENCH {json}" with its own timings (read, fit, print; wall and CPU) to stderr.
import { readFileSync } from 'node:fs';
import { fitOneStage } from '../../src/engine/onestage/fitOneStage.js';
import type { ResolvedContrast } from '../../src/engine/contrasts/resolve.js';
import { networkFromCsv } from './csvNetwork.js';

const [file, residual, df, lrt] = process.argv.slice(2);
const cpu0 = process.cpuUsage();
const t0 = performance.now();
const network = networkFromCsv(readFileSync(file, 'utf8'));
const t1 = performance.now();
const codes = network.treatments.map((t) => t.code);
const control = codes.includes('CTL') ? 'CTL' : codes[0];
const contrast: ResolvedContrast = {
  name: 'treated_vs_control',
  kind: 'treated-vs-control',
  coefficients: Object.fromEntries(codes.map((c) => [c, c === control ? -(codes.length - 1) : 1])),
  divisor: codes.length - 1,
  meaning: 'mean of the treated minus the control',
};
const result = fitOneStage(network, [contrast], {
  random: ['trial', 'block', 'treatment-by-trial'],
  residual: residual === 'per-trial' ? 'per-trial' : 'common',
  df: df === 'kenward-roger' ? 'kenward-roger' : df === 'residual' ? 'residual' : 'satterthwaite',
  confidence: 0.95,
  lrt: lrt === 'lrt',
  profile: false,
});
const t2 = performance.now();
const text = JSON.stringify(result);
process.stdout.write(`${text}\n`);
const t3 = performance.now();
const cpu = process.cpuUsage(cpu0);
process.stderr.write(
  `BENCH ${JSON.stringify({ readMs: t1 - t0, fitMs: t2 - t1, printMs: t3 - t2, totalMs: t3 - t0, cpuMs: (cpu.user + cpu.system) / 1000, logLik: result.logLik, iterations: result.run.iterations, converged: result.converged, variance: result.variance.residualByTrial ? undefined : result.variance, contrast: result.contrasts[0], bytes: text.length })}\n`,
);
