// The command on a network whose protocol changed over the years (test/support/protocolChangeNetwork.ts;
// needs the build): `manyfield analyze --data F --spec S --json` pools every trial that can carry
// each contrast and lists the others with reasons, exit 0, nothing on stderr. The numbers of the
// same path are checked against R in test/api/analysis/perTrialContrasts.test.ts; here the
// counts are derived from the generator's stated drops.
import { describe, expect, it } from 'vitest';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { manyfield, tempDir } from '../support/cli.js';
import { protocolChangeCsv, DROPPED, PROTOCOLS, PROTOCOL_CONTRASTS as C, PROTOCOL_SPEC_BASE } from '../support/protocolChangeNetwork.js';

describe('analyze --data on a network whose protocol changed', () => {
  it('pools a rate trend, treated against control and early against late over the trials that carry each', () => {
    const dir = tempDir();
    writeFileSync(join(dir, 'plots.csv'), protocolChangeCsv(11));
    writeFileSync(
      join(dir, 'spec.json'),
      JSON.stringify({
        ...PROTOCOL_SPEC_BASE,
        contrasts: [C.rateLinear, C.treatedVsControl, C.earlyVsLate],
        oneStage: null,
      }),
    );
    const run = manyfield(['analyze', '--data', join(dir, 'plots.csv'), '--spec', join(dir, 'spec.json'), '--json']);
    expect(run.stderr).toBe('');
    expect(run.status).toBe(0);
    const out = JSON.parse(run.stdout) as { twoStage: { pooled: { name: string; k: number; leftOut: string[] }[] } };
    // From the generator: 18 trials; one dropped its control; early against late exists where a
    // late timing was tested at a rate also tested early (2023–24, unless both late rates were dropped).
    const trials = Object.keys(PROTOCOLS).length * 3;
    const lateTrials = Object.entries(PROTOCOLS).filter(([, p]) => p.some(([, , timing]) => timing === 'late')).length * 3;
    const noControl = Object.values(DROPPED).filter((d) => d.includes('CTL')).length;
    const k = Object.fromEntries(out.twoStage.pooled.map((p) => [p.name, p.k]));
    expect(k).toEqual({ rate_linear: trials, treated_vs_control: trials - noControl, early_vs_late: lateTrials });
    const left = out.twoStage.pooled.find((p) => p.name === 'early_vs_late')?.leftOut ?? [];
    expect(left).toHaveLength(trials - lateTrials);
    expect(left.every((l) => /\(no treatment has timing = late\)$/.test(l))).toBe(true);
  });
});
