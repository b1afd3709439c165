// The trial stage alone on the 4,000-trial example network (as bench:full writes it), timed
// in-process: every trial analysed and summarised as the default report does (no per-plot list), three passes
// (the first warms the compiler). `--check FILE`: writes the summaries to FILE the first time and
// afterwards compares every field with it (a change that moves a number shows here).
//   npx tsx bench/full/trialStage.ts [--trials 4000] [--check FILE]
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { isDeepStrictEqual } from 'node:util';
import { readNetworkForAnalysis } from '../../src/intake/index.js';
import { analysisSpecSchema } from '../../src/spec/analysisSpec.js';
import { analyseOneTrial } from '../../src/api/analysis/runAnalysis.js';
import { resolveContrast } from '../../src/engine/contrasts/resolve.js';
import { summariseTrial } from '../../src/engine/trial/trialSummary.js';
import { TrialContrastCache } from '../../src/api/analysis/trialContrastCache.js';
import { exampleNetworkCsv, exampleSpec } from './exampleNetwork.js';

const args = process.argv.slice(2);
const arg = (name: string): string | undefined => (args.includes(name) ? args[args.indexOf(name) + 1] : undefined);
const n = Number(arg('--trials') ?? 4000);
const check = arg('--check');
const file = join(tmpdir(), `manyfield-trial-stage-${n}.csv`);
if (!existsSync(file)) writeFileSync(file, exampleNetworkCsv(n, 17 + n));
const spec = analysisSpecSchema.parse(exampleSpec({ twoStage: true, oneStage: false, lrt: false }));
const { network } = await readNetworkForAnalysis(file, spec);
const contrasts = spec.contrasts.map((c) => resolveContrast(c, network.treatments, spec.control ?? network.control, network.factors));
const shared = new Map(contrasts.map((c) => [c.name, c.meaning]));
let out: unknown[] = [];
for (let pass = 0; pass < 3; pass++) {
  const cache = new TrialContrastCache();
  const t0 = performance.now();
  out = network.trials.map((t) => summariseTrial(analyseOneTrial(t, network, contrasts, spec, undefined, cache, undefined, false), shared));
  console.log(`pass ${pass + 1}: ${network.trials.length} trials in ${(performance.now() - t0).toFixed(0)} ms`);
}
if (check) {
  const plain = JSON.parse(JSON.stringify(out));
  if (!existsSync(check)) {
    writeFileSync(check, JSON.stringify(plain));
    console.log(`wrote ${check}`);
  } else console.log(isDeepStrictEqual(plain, JSON.parse(readFileSync(check, 'utf8'))) ? 'summaries identical to the reference' : 'SUMMARIES DIFFER from the reference');
}
