// The report.build handler (the screens' route to the report): the HTML of a saved analysis,
// with numbers equal to the saved run's analysis document (half a unit of the last decimal
// shown), a file name from the trait and number, progress by stage, a cancel honoured, and the
// PDF when asked (printed with the system Chromium; checked with pdfinfo and pdftotext). The
// charts come from the built dist/cli/reportCharts.cjs ("npm run build").
import { spawnSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { api, callHandler } from '../../../src/api/handlers.js';
import type { ProgressEvent } from '../../../src/api/context.js';
import { tempDir } from '../../support/cli.js';
import { contentsTitles, disagreements, markedNumbers } from '../../support/reportNumbers.js';

const SPEC = JSON.parse(readFileSync(join(import.meta.dirname, '..', '..', '..', 'examples', 'demo-analysis.json'), 'utf8')) as unknown;
const dir = tempDir('mf-report-handler-');
const workspace = join(dir, 'demo.manyfield');
let analysis: unknown;
let id: number;

beforeAll(async () => {
  const demo = await callHandler('demo.build', { workspace });
  expect(demo.ok).toBe(true);
  const run = await callHandler('analysis.run', { workspace, spec: SPEC, save: true });
  if (!run.ok) throw new Error(run.error.message);
  analysis = run.data;
  const list = await api['analysis.list']({ workspace });
  if (!list.ok) throw new Error(list.error.message);
  id = list.data[0].id;
}, 600_000);

describe('report.build', () => {
  it('answers the HTML of a saved analysis, numbers equal to its run, with progress and a file name', async () => {
    const events: ProgressEvent[] = [];
    const r = await api['report.build']({ workspace, analysis: id }, { onProgress: (e) => events.push(e) });
    if (!r.ok) throw new Error(r.error.message);
    expect(r.data.fileStem).toBe(`yield-analysis-${id}-report`);
    expect(r.data.reproduced).toBe(true);
    expect(r.data.pdf).toBeNull();
    expect(r.data.pdfProblem).toBeNull();
    const marked = markedNumbers(r.data.html);
    expect(marked.length).toBeGreaterThan(300);
    expect(disagreements(marked, analysis)).toEqual([]);
    expect(contentsTitles(r.data.html)).toContain('6. Rate to recommend');
    // the analysis stages first (each trial, ...), then the writing
    expect(events.filter((e) => e.stage === 'trial-stage').length).toBeGreaterThanOrEqual(42);
    expect(events.at(-1)?.stage).toBe('report-write');
  });

  it('stops when cancelled, and says nothing was stored', async () => {
    const controller = new AbortController();
    controller.abort();
    const r = await api['report.build']({ workspace, analysis: id }, { signal: controller.signal });
    expect(r).toMatchObject({ ok: false, error: { code: 'cancelled' } });
  });

  it('refuses an analysis the workspace does not hold', async () => {
    const r = await api['report.build']({ workspace, analysis: 999 });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error.message).toMatch(/999/);
  });

  it('prints the PDF when asked: numbered contents, the sections, several pages', async () => {
    const events: ProgressEvent[] = [];
    const r = await api['report.build']({ workspace, analysis: id, pdf: true }, { onProgress: (e) => events.push(e) });
    expect(events.at(-1)?.stage).toBe('report-print');
    if (!r.ok) throw new Error(r.error.message);
    expect(r.data.pdfProblem).toBeNull();
    const bytes = Buffer.from(r.data.pdf!, 'base64');
    expect(bytes.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    const file = join(dir, 'report.pdf');
    writeFileSync(file, bytes);
    const pages = Number(/Pages:\s+(\d+)/.exec(spawnSync('pdfinfo', [file], { encoding: 'utf8' }).stdout)![1]);
    expect(pages).toBeGreaterThanOrEqual(8);
    const first = spawnSync('pdftotext', ['-layout', '-f', '1', '-l', '1', file, '-'], { encoding: 'utf8' }).stdout;
    expect(first).toMatch(/11\. Appendix A: every trial\s+\d+/);
  }, 120_000);
});
