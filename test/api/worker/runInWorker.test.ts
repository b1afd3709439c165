// The worker runner on its own: progress streams back, a cancel mid-store answers "cancelled"
// and stores nothing, and a handler's own failure comes back as a Result.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { copyFileSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { writePlotCsv, BENCH_MAPPING, PLOTS_PER_TRIAL } from '../../../bench/import/generateCsv.js';
import { api } from '../../../src/api/handlers.js';
import { runInWorker } from '../../../src/api/worker/runInWorker.js';
import type { ProgressEvent } from '../../../src/api/context.js';

let dir: string;
let demo: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'manyfield-worker-'));
  demo = join(dir, 'demo.manyfield');
  const built = await api['demo.build']({ workspace: demo });
  if (!built.ok) throw new Error(built.error.message);
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('runInWorker', () => {
  it('answers a cancel during the store with a "cancelled" Result and leaves the file byte-identical', async () => {
    const csv = join(dir, 'big.csv');
    await writePlotCsv(csv, 3000 * PLOTS_PER_TRIAL, 3);
    const target = join(dir, 'target.manyfield');
    copyFileSync(demo, target);
    const before = readFileSync(target);
    const controller = new AbortController();
    const events: ProgressEvent[] = [];
    const result = await runInWorker('data.import', { workspace: target, file: csv, mapping: BENCH_MAPPING }, {
      signal: controller.signal,
      onProgress: (e) => {
        events.push(e);
        if (e.stage === 'store') controller.abort();
      },
    });
    expect(events.some((e) => e.stage === 'read')).toBe(true);
    expect(result).toMatchObject({ ok: false, error: { code: 'cancelled' } });
    expect(readFileSync(target).equals(before)).toBe(true);
  });

  it('cancels an analysis during the trial stage; nothing is saved in the workspace', async () => {
    const spec = JSON.parse(readFileSync(fileURLToPath(new URL('../../../examples/demo-analysis.json', import.meta.url)), 'utf8')) as unknown;
    const target = join(dir, 'analysis.manyfield');
    copyFileSync(demo, target);
    const before = readFileSync(target);
    const controller = new AbortController();
    const stages: string[] = [];
    const result = await runInWorker('analysis.run', { workspace: target, spec, save: true }, {
      signal: controller.signal,
      onProgress: (e) => {
        stages.push(e.stage);
        if (e.stage === 'trial-stage') controller.abort();
      },
    });
    expect(stages[0]).toBe('trial-stage');
    expect(stages.length).toBeLessThan(42);
    expect(result).toMatchObject({ ok: false, error: { code: 'cancelled' } });
    expect(readFileSync(target).equals(before)).toBe(true);
  });

  it('returns the handler\'s own refusal as a Result (validation happens in the worker too)', async () => {
    expect(await runInWorker('data.import', { workspace: '', file: 'x', mapping: {} })).toMatchObject({ ok: false, error: { code: 'invalid-argument' } });
    expect(await runInWorker('no.such', {})).toMatchObject({ ok: false, error: { code: 'not-found' } });
  });
});
