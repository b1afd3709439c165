// Contrasts resolved once per distinct set of tested treatments (src/api/analysis/trialContrastCache.ts)
// against resolving them for every trial: each trial's whole analysis is equal, on a network whose
// protocol changed and whose sites dropped treatments (test/support/protocolChangeNetwork.ts), so
// trials share some sets and not others. Exact equality: the same functions on the same input.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { resolveContrast } from '../../../src/engine/contrasts/resolve.js';
import { analyseOneTrial } from '../../../src/api/analysis/runAnalysis.js';
import { TrialContrastCache } from '../../../src/api/analysis/trialContrastCache.js';
import { testedTreatments } from '../../../src/api/analysis/testedTreatments.js';
import { readNetworkForAnalysis } from '../../../src/intake/index.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import { protocolChangeCsv, PROTOCOL_CONTRASTS as C, PROTOCOL_SPEC_BASE } from '../../support/protocolChangeNetwork.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-contrast-cache-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const spec = analysisSpecSchema.parse({
  ...PROTOCOL_SPEC_BASE,
  contrasts: [C.rateLinear, C.rateQuadratic, C.treatedVsControl, C.earlyVsLate, C.e60VsControl],
});

describe('contrasts resolved once per set of tested treatments', () => {
  it('give every trial the analysis it gets with its own resolution', async () => {
    const file = join(dir, 'data.csv');
    writeFileSync(file, protocolChangeCsv(7));
    const { network } = await readNetworkForAnalysis(file, spec);
    const contrasts = spec.contrasts.map((c) => resolveContrast(c, network.treatments, 'CTL', network.factors));
    const cache = new TrialContrastCache();
    const shared = network.trials.map((t) => analyseOneTrial(t, network, contrasts, spec, undefined, cache));
    const own = network.trials.map((t) => analyseOneTrial(t, network, contrasts, spec, undefined));
    expect(shared).toEqual(own);
    // the network has repeated and distinct sets: fewer resolutions than trials, more than one
    const sets = new Set(network.trials.map((t) => JSON.stringify(testedTreatments(t, network.treatments))));
    expect(sets.size).toBeGreaterThan(1);
    expect(sets.size).toBeLessThan(network.trials.length);
  });
});
