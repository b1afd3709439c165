// `analyze --data` with a signal runs in the analysis worker, which reads the file itself
// (src/api/analysis/cancellable.ts, analysisWorker.ts) instead of receiving a copy of the
// network. Reference: the same file read and analysed on the caller's thread (no signal): the
// same report, the same SHA-256 and the same intake warnings.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runFileAnalysisCancellable } from '../../../src/api/analysis/cancellable.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import { protocolChangeCsv, PROTOCOL_CONTRASTS as C, PROTOCOL_SPEC_BASE } from '../../support/protocolChangeNetwork.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-worker-read-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const spec = analysisSpecSchema.parse({
  ...PROTOCOL_SPEC_BASE,
  contrasts: [C.rateLinear, C.treatedVsControl],
  oneStage: { random: ['trial', 'block', 'treatment-by-trial'], residual: 'common', df: 'satterthwaite', lrt: false, profile: false },
});

/** The one-stage fit's own clock is the only thing allowed to differ. */
function withoutTiming(report: object): unknown {
  return JSON.parse(JSON.stringify(report), (key, value) => (key === 'elapsedMs' ? undefined : value));
}

describe('the analysis worker reads the plot file itself', () => {
  it('gives the report, the SHA-256 and the warnings of the file read on the calling thread', async () => {
    const file = join(dir, 'data.csv');
    writeFileSync(file, protocolChangeCsv(11));
    const here = await runFileAnalysisCancellable(file, spec);
    const worker = await runFileAnalysisCancellable(file, spec, { signal: new AbortController().signal });
    expect(worker.sha256).toBe(here.sha256);
    expect(worker.sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(worker.warnings).toEqual(here.warnings);
    expect(withoutTiming(worker.report)).toEqual(withoutTiming(here.report));
    expect(here.report.twoStage.trials.length).toBeGreaterThan(5);
  });

  it('a bad file fails in the worker with the message the calling thread gives', async () => {
    const file = join(dir, 'bad.csv');
    writeFileSync(file, 'env,block,trt,rate,timing,y\nE1,1,CTL,0,,abc\n');
    const here = await runFileAnalysisCancellable(file, spec).then(() => null, (e: Error) => e.message);
    const worker = await runFileAnalysisCancellable(file, spec, { signal: new AbortController().signal }).then(() => null, (e: Error) => e.message);
    expect(here).toMatch(/row 2, column "y", value "abc"/);
    expect(worker).toBe(here);
  });
});
