// The summary report carries a trial's contrast meaning only where it differs from the meaning
// its pool carries (src/engine/trial/trialSummary.ts): the same analysis with --detail plots is
// the reference — every number of each trial's summary equals the full analysis's, and each
// left-out meaning is exactly the pool's. Networks: test/support/protocolChangeNetwork.ts, whose
// trials tested different treatments (each meaning its own), and the DESIGN §5 example network of
// bench:full (every trial tested the whole protocol: each meaning the pool's).
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runAnalysisFromSource } from '../../../src/api/analysis/fromSource.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import { protocolChangeCsv, PROTOCOL_CONTRASTS as C, PROTOCOL_SPEC_BASE } from '../../support/protocolChangeNetwork.js';
import { exampleNetworkCsv } from '../../../bench/full/exampleNetwork.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-meanings-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const spec = analysisSpecSchema.parse({
  ...PROTOCOL_SPEC_BASE,
  contrasts: [C.rateLinear, C.treatedVsControl, C.earlyVsLate],
  oneStage: null,
  twoStage: { tau2: 'reml', interval: 'hksj' },
});

interface Contrast {
  readonly name: string;
  readonly estimable: boolean;
  readonly meaning?: string;
  readonly [key: string]: unknown;
}

describe('contrast meanings in the summary report', () => {
  it("leave out exactly the meanings equal to the pool's and change no number", async () => {
    let left = 0;
    let kept = 0;
    for (const [name, csv] of [['protocol-change', protocolChangeCsv(20260)], ['example', exampleNetworkCsv(12, 3)]]) {
      const file = join(dir, `${name}.csv`);
      writeFileSync(file, csv);
      const summary = await runAnalysisFromSource({ data: file, spec, save: false });
      const plots = await runAnalysisFromSource({ data: file, spec, save: false, detail: 'plots' });
      const poolMeaning = new Map(plots.twoStage.pooled.map((p) => [p.name, p.meaning]));
      summary.twoStage.trials.forEach((t, i) => {
        const full = plots.twoStage.trials[i];
        expect(t.trial).toBe(full.trial);
        (t.contrasts as readonly Contrast[]).forEach((c, j) => {
          const f = full.contrasts[j] as unknown as Contrast;
          expect(c.name).toBe(f.name);
          if (!c.estimable) return;
          for (const key of ['estimate', 'se', 'df', 'p', 'lower', 'upper']) expect(c[key]).toBe(f[key]);
          if (f.meaning === undefined || !['rate_linear', 'early_vs_late'].includes(c.name)) return;
          if (f.meaning === poolMeaning.get(c.name)) {
            expect(c.meaning).toBeUndefined();
            left++;
          } else {
            expect(c.meaning).toBe(f.meaning);
            kept++;
          }
        });
      });
    }
    // both cases occur over the two networks
    expect(left).toBeGreaterThan(0);
    expect(kept).toBeGreaterThan(0);
  });
});
