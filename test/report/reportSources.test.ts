// `manyfield report` from each source it takes: a saved analysis of a workspace (--analysis ID:
// its spec re-run, its fingerprint checked, and a warning once the data changed) and a plot file
// (--data, with the spec's own exclusions listed). Each report's marked numbers equal the
// analysis JSON of the same spec from `manyfield analyze --json` (half a unit of the last
// decimal shown; test/support/reportNumbers.ts), and its sections are present. Needs the built
// command ("npm run build").
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { beforeAll, describe, expect, it } from 'vitest';
import { manyfield, tempDir } from '../support/cli.js';
import { nitrogenColumns, writeNitrogenCsv } from '../support/nitrogenNetwork.js';
import { contentsTitles, disagreements, markedNumbers } from '../support/reportNumbers.js';
import { writeJson } from '../cli/support.js';

const ROOT = join(import.meta.dirname, '..', '..');
const DEMO_SPEC = join(ROOT, 'examples', 'demo-analysis.json');

function ok(args: string[]): { stdout: string; stderr: string } {
  const r = manyfield(args);
  if (r.status !== 0) throw new Error(`manyfield ${args.join(' ')} failed (${r.status}): ${r.stderr}`);
  return r;
}

function savedIds(workspace: string): number[] {
  const db = new Database(workspace, { readonly: true, fileMustExist: true });
  try {
    return (db.prepare('SELECT id FROM analysis ORDER BY id').all() as { id: number }[]).map((r) => r.id);
  } finally {
    db.close();
  }
}

describe('report --analysis ID (a saved analysis of a workspace)', () => {
  const dir = tempDir('mf-report-saved-');
  const ws = join(dir, 'demo.manyfield');
  let analysis: Record<string, unknown> & { provenance: { dataFingerprint: string } };
  let id: number;

  beforeAll(() => {
    ok(['demo', '--workspace', ws]);
    analysis = JSON.parse(ok(['analyze', '--workspace', ws, '--spec', DEMO_SPEC, '--json']).stdout);
    const ids = savedIds(ws);
    expect(ids).toHaveLength(1);
    id = ids[0];
  }, 600_000);

  it('re-runs the saved spec: numbers equal the saved run\'s JSON, the fingerprint matches, every section is there', () => {
    const out = join(dir, 'saved.html');
    const r = ok(['report', '--workspace', ws, '--analysis', String(id), '--out', out]);
    expect(r.stderr).not.toMatch(/fingerprints differ/);
    const html = readFileSync(out, 'utf8');
    const marked = markedNumbers(html);
    expect(marked.length).toBeGreaterThan(300);
    expect(disagreements(marked, analysis)).toEqual([]);
    expect(html).toMatch(new RegExp(`Saved analysis #${id} \\([^)]*\\) was re-run for this report: its data fingerprint <code>${analysis.provenance.dataFingerprint}</code> <b>matches</b>`));
    expect(contentsTitles(html)).toEqual(['1. In short', '2. The question', '3. The data', '4. Methods', '5. Results by contrast', '6. Rate to recommend', '7. The one-stage model as a check', '8. Diagnostics', '9. Cautions', '10. Provenance', '11. Appendix A: every trial']);
    // The saved spec is printed in the provenance, as saved.
    expect(html).toContain('&quot;priceRatio&quot;: 0.0048');
  });

  it('says so, on the terminal and in the report, when the data changed since the analysis was saved', () => {
    ok(['exclude', '--workspace', ws, '--plot', '1', '--reason', 'checked in the field: lodged']);
    const out = join(dir, 'changed.html');
    const r = ok(['report', '--workspace', ws, '--analysis', String(id), '--out', out]);
    expect(r.stderr).toMatch(new RegExp(`data changed since analysis ${id} was saved`));
    const html = readFileSync(out, 'utf8');
    expect(html).toMatch(/<b>does not match<\/b> the data analysed now/);
    expect(html).toContain('checked in the field: lodged');
    const fp = /data-provenance="dataFingerprint">([^<]+)</.exec(html)![1];
    expect(fp).not.toBe(analysis.provenance.dataFingerprint);
  });

  it('refuses an analysis number the workspace does not hold, naming it', () => {
    const r = manyfield(['report', '--workspace', ws, '--analysis', '999', '--out', join(dir, 'none.html')]);
    expect(r.status).not.toBe(0);
    expect(r.stderr).toMatch(/999/);
  });
});

describe('report --data FILE (plots read from a file)', () => {
  const dir = tempDir('mf-report-data-');
  const data = join(dir, 'network.csv');
  const spec = {
    trait: 'yield',
    control: 'CTL',
    columns: nitrogenColumns(),
    contrasts: [
      { name: 'treated_vs_control', kind: 'treated-vs-control' },
      { name: 'rate_linear', trend: 'rate', degree: 1 },
    ],
    oneStage: null,
    twoStage: { tau2: 'reml', interval: 'hksj' },
    exclude: [{ trial: 'S2-2024', plot: '304', reason: 'decimal slip: 81.0 written for 8.10' }],
  };
  let specFile: string;

  beforeAll(() => {
    writeNitrogenCsv(data, { slip: { site: 'S2', year: 2024, plot: '304' } });
    specFile = writeJson(dir, 'spec.json', spec);
  });

  it('reports the file\'s analysis: numbers equal analyze --data, the spec\'s exclusion listed, no workspace facts claimed', () => {
    const analysis = JSON.parse(ok(['analyze', '--data', data, '--spec', specFile, '--json']).stdout) as { twoStage: { pooled: unknown[]; trials: unknown[] } };
    const out = join(dir, 'file.html');
    ok(['report', '--data', data, '--spec', specFile, '--out', out]);
    const html = readFileSync(out, 'utf8');
    const marked = markedNumbers(html);
    expect(marked.length).toBeGreaterThan(50);
    expect(disagreements(marked, analysis)).toEqual([]);
    // every pooled contrast and every trial's row is reported
    expect(new Set(marked.filter((m) => /^twoStage\.pooled\.\d+\.estimate$/.test(m.key)).map((m) => m.key)).size).toBe(analysis.twoStage.pooled.length);
    expect(new Set(marked.filter((m) => /^twoStage\.trials\.\d+\.anova\.cv$/.test(m.key)).map((m) => m.key)).size).toBe(analysis.twoStage.trials.length);
    expect(html).toContain('decimal slip: 81.0 written for 8.10');
    expect(html).toContain('The data were read from a file, not a workspace.');
    expect(contentsTitles(html)).toEqual(expect.arrayContaining(['1. In short', '3. The data', '4. Methods', '5. Results by contrast', 'Cautions', 'Provenance'].map((t) => expect.stringContaining(t))));
    expect(html).not.toMatch(/Saved analysis #/);
  });
});
