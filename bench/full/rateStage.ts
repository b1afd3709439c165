// The rate-response stage alone (quadratic, 200-draw bootstrap, as bench:full's rate spec) on the
// 4,000-trial example network, timed in-process over three passes. `--check FILE`: writes the
// result to FILE the first time, afterwards compares every field with it.
//   npx tsx bench/full/rateStage.ts [--trials 4000] [--check FILE]
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { isDeepStrictEqual } from 'node:util';
import { readNetworkForAnalysis } from '../../src/intake/index.js';
import { analysisSpecSchema } from '../../src/spec/analysisSpec.js';
import { analyzeRateResponse } from '../../src/engine/rate/analyzeRateResponse.js';
import { exampleNetworkCsv, exampleSpec } from './exampleNetwork.js';

const args = process.argv.slice(2);
const arg = (name: string): string | undefined => (args.includes(name) ? args[args.indexOf(name) + 1] : undefined);
const n = Number(arg('--trials') ?? 4000);
const check = arg('--check');
const file = join(tmpdir(), `manyfield-trial-stage-${n}.csv`);
if (!existsSync(file)) writeFileSync(file, exampleNetworkCsv(n, 17 + n));
const spec = analysisSpecSchema.parse(exampleSpec({ twoStage: true, oneStage: false, lrt: false, rateBootstrap: 200 }));
const { network } = await readNetworkForAnalysis(file, spec);
const r = spec.rateResponse!;
let out: unknown = null;
for (let pass = 0; pass < 3; pass++) {
  const t0 = performance.now();
  out = analyzeRateResponse(network, { ...r, confidence: spec.confidence });
  console.log(`pass ${pass + 1}: rate response of ${network.trials.length} trials in ${(performance.now() - t0).toFixed(0)} ms`);
}
if (check) {
  const plain = JSON.parse(JSON.stringify(out));
  if (!existsSync(check)) {
    writeFileSync(check, JSON.stringify(plain));
    console.log(`wrote ${check}`);
  } else console.log(isDeepStrictEqual(plain, JSON.parse(readFileSync(check, 'utf8'))) ? 'result identical to the reference' : 'RESULT DIFFERS from the reference');
}
