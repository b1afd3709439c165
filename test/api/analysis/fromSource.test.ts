// analyze --data reads a one-row-per-plot file through the direct path and a file with a trait
// column through the table path: the same plots must give the same report either way.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runAnalysisFromSource } from '../../../src/api/analysis/fromSource.js';
import { mulberry32 } from '../../../src/engine/stats/random.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-fromsource-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('runAnalysisFromSource on plot files', () => {
  it('wide (direct path) and long (trait column, table path) files give the same report', async () => {
    const uniform = mulberry32(5);
    const wide = ['env,block,trt,y'];
    const long = ['env,block,trt,trait,v'];
    for (let e = 0; e < 6; e++) {
      for (let b = 1; b <= 3; b++) {
        for (const trt of ['CTL', 'A', 'B']) {
          const y = (3 + uniform() + (trt === 'CTL' ? 0 : 0.5)).toFixed(4);
          wide.push(`E${e},${b},${trt},${y}`);
          long.push(`E${e},${b},${trt},y,${y}`);
        }
      }
    }
    writeFileSync(join(dir, 'wide.csv'), `${wide.join('\n')}\n`);
    writeFileSync(join(dir, 'long.csv'), `${long.join('\n')}\n`);
    const base = { trait: 'y', control: 'CTL', contrasts: [{ name: 'treated_vs_control', kind: 'treated-vs-control' }] };
    const a = await runAnalysisFromSource({ data: join(dir, 'wide.csv'), spec: analysisSpecSchema.parse({ ...base, columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y' } }), save: false });
    const b = await runAnalysisFromSource({ data: join(dir, 'long.csv'), spec: analysisSpecSchema.parse({ ...base, columns: { trial: 'env', block: 'block', treatment: 'trt', trait: 'trait', response: 'v' } }), save: false });
    const strip = (r: typeof a): unknown => JSON.parse(JSON.stringify({ ...r, provenance: undefined }, (k, v) => (k === 'elapsedMs' || k === 'plotId' ? undefined : v)));
    expect(a.provenance.dataFingerprint).toMatch(/^sha256:[0-9a-f]{64}$/);
    expect(a.provenance.dataFingerprint).not.toBe(b.provenance.dataFingerprint);
    expect(strip(a)).toEqual(strip(b));
    expect(a.trialsAnalysed).toBe(6);
  });
});
