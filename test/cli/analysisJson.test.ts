// The column layout `analyze --json` writes by default (src/cli/analysisJson.ts): read back with
// expandAnalysisJson it is the api's summary report exactly — every number bit for bit, nothing
// rounded — and each trial still carries the DESIGN §5 keys (trial, contrasts with name,
// estimate, se, df). Reference: the report itself as the api gives it (no tolerance: equality).
// Networks: test/support/protocolChangeNetwork.ts (trials that dropped treatments, contrasts not
// estimable in some, a missing plot) and the DESIGN §5 example network of bench:full, on the
// natural and the log scale (a transform recorded per trial, no CV), with the one-stage model.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runAnalysisFromSource } from '../../src/api/analysis/fromSource.js';
import { analysisSpecSchema } from '../../src/spec/analysisSpec.js';
import { COLUMNS_LAYOUT, compactAnalysisJson, expandAnalysisJson } from '../../src/cli/analysisJson.js';
import { protocolChangeCsv, PROTOCOL_CONTRASTS as C, PROTOCOL_SPEC_BASE } from '../support/protocolChangeNetwork.js';
import { exampleNetworkCsv, exampleSpec } from '../../bench/full/exampleNetwork.js';
import { manyfield } from '../support/cli.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-json-columns-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const protocolSpec = analysisSpecSchema.parse({
  ...PROTOCOL_SPEC_BASE,
  contrasts: [C.rateQuadratic, C.treatedVsControl, C.earlyVsLate],
  oneStage: null,
  twoStage: { tau2: 'reml', interval: 'hksj' },
});

// What the command writes: the document as JSON text, read back as a reader would.
const written = (report: unknown): Record<string, unknown> => JSON.parse(JSON.stringify(compactAnalysisJson(report))) as Record<string, unknown>;
const plain = (report: unknown): unknown => JSON.parse(JSON.stringify(report));

type Row = Record<string, unknown>;

describe('analyze --json in columns', () => {
  const cases: [string, () => string, () => unknown][] = [
    ['protocol change', () => protocolChangeCsv(20260), () => protocolSpec],
    ['example, one-stage too', () => exampleNetworkCsv(40, 11), () => analysisSpecSchema.parse(exampleSpec({ twoStage: true, oneStage: true, lrt: false }))],
    ['example on the log scale', () => exampleNetworkCsv(25, 12), () => analysisSpecSchema.parse({ ...exampleSpec({ twoStage: true, oneStage: true, lrt: false }), transform: 'log' })],
  ];

  it.each(cases)('%s: read back, the document is the summary report exactly', async (name, csv, spec) => {
    const file = join(dir, `${name.replace(/\W+/g, '-')}.csv`);
    writeFileSync(file, csv());
    const report = await runAnalysisFromSource({ data: file, spec: spec() as ReturnType<typeof analysisSpecSchema.parse>, save: false });
    const doc = written(report);
    expect(doc.layout).toBe(COLUMNS_LAYOUT);
    expect(expandAnalysisJson(doc)).toEqual(plain(report));
    // Smaller than the report written row by row.
    expect(JSON.stringify(doc).length).toBeLessThan(JSON.stringify(report).length);

    // Every trial keeps the DESIGN §5 keys; the columns have one entry per trial.
    const twoStage = doc.twoStage as { trials: Row[]; trialColumns: Record<string, unknown>; treatments: string[] };
    for (const t of twoStage.trials) {
      expect(typeof t.trial).toBe('string');
      for (const c of t.contrasts as Row[]) {
        expect(typeof c.name).toBe('string');
        if (c.estimable === false) expect(typeof c.reason).toBe('string');
        else for (const k of ['estimate', 'se', 'df']) expect(c, `${String(t.trial)} ${String(c.name)}`).toHaveProperty(k);
      }
    }
    const columns = twoStage.trialColumns;
    for (const key of ['design', 'residualDf', 'excluded', 'missing']) expect(columns[key]).toHaveLength(twoStage.trials.length);
    const means = columns.means as Record<string, unknown[][]>;
    for (const f of ['estimate', 'se', 'n']) for (const row of means[f]) expect(row).toHaveLength(twoStage.treatments.length);
  });

  it('leaves out only what another column repeats, and says which', async () => {
    const file = join(dir, 'omitted.csv');
    writeFileSync(file, exampleNetworkCsv(30, 13));
    const report = (await runAnalysisFromSource({ data: file, spec: analysisSpecSchema.parse(exampleSpec({ twoStage: true, oneStage: false, lrt: false })), save: false })) as unknown as { twoStage: { pooled: Row[] } };
    const doc = written(report) as { twoStage: { pooled: Row[]; trialColumns: { derived: string[] } } };
    expect(doc.twoStage.trialColumns.derived).toEqual(['sigma', 'anova.cv']);
    doc.twoStage.pooled.forEach((p, i) => {
      const s = p.sensitivity as Row & { omitted: string[] };
      expect(s.omitted).toEqual(['leaveOneOut.trial', 'influence.trial', 'influence.leverage', 'cumulative.k']);
      expect(s.influence).not.toHaveProperty('leverage');
      const original = report.twoStage.pooled[i].sensitivity as { influence: { leverage: number[] } };
      expect(original.influence.leverage).toEqual((p.weights as { share: number[] }).share);
    });
  });

  it('is what the command writes by default; --detail plots stays row by row', () => {
    const data = join(dir, 'cli.csv');
    const spec = join(dir, 'cli-spec.json');
    writeFileSync(data, exampleNetworkCsv(8, 14));
    writeFileSync(spec, JSON.stringify(exampleSpec({ twoStage: true, oneStage: false, lrt: false })));
    const a = manyfield(['analyze', '--data', data, '--spec', spec, '--json']);
    expect(a.status).toBe(0);
    const doc = JSON.parse(a.stdout) as Row & { twoStage: { trials: Row[] } };
    expect(doc.layout).toBe(COLUMNS_LAYOUT);
    expect(Object.keys(doc.twoStage.trials[0]).sort()).toEqual(['contrasts', 'flags', 'n', 'site', 'trial', 'year']);
    const b = manyfield(['analyze', '--data', data, '--spec', spec, '--json', '--detail', 'plots']);
    expect(b.status).toBe(0);
    expect((JSON.parse(b.stdout) as Row).layout).toBeUndefined();
  }, 120_000);
});
