// Long handlers through the server: a 1,000-trial import runs in a worker thread while the
// server answers other calls; a client that aborts mid-store cancels the import and the
// workspace is left byte-for-byte as it was.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { copyFileSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { writePlotCsv, BENCH_MAPPING, PLOTS_PER_TRIAL } from '../../bench/import/generateCsv.js';
import { api } from '../../src/api/handlers.js';
import { counts, openWorkspace } from '../../src/store/index.js';
import { startServer, type RunningServer } from '../../src/server/server.js';
import { callApi, upload } from '../support/serverClient.js';

let dir: string;
let server: RunningServer;
let base: string;
let demo: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'manyfield-jobs-'));
  demo = join(dir, 'demo.manyfield');
  const built = await api['demo.build']({ workspace: demo });
  if (!built.ok) throw new Error(built.error.message);
  server = await startServer({ workspace: demo, rendererDir: dir });
  base = `http://127.0.0.1:${server.port}`;
});

afterAll(async () => {
  await server.close();
  rmSync(dir, { recursive: true, force: true });
});

function rowCounts(path: string): ReturnType<typeof counts> {
  const ws = openWorkspace(path);
  try {
    return counts(ws);
  } finally {
    ws.close();
  }
}

describe('long jobs through the server', () => {
  it('answers trials.list while a 1,000-trial import runs, then completes the import', async () => {
    const csv = join(dir, 'thousand.csv');
    await writePlotCsv(csv, 1000 * PLOTS_PER_TRIAL);
    const ref = await upload(base, server.token, 'thousand.csv', readFileSync(csv));
    const target = join(dir, 'thousand.manyfield');
    copyFileSync(demo, target);

    let importDone = 0;
    let listDone = 0;
    let firstProgress = 0;
    let markFirstProgress: () => void = () => {};
    const progressSeen = new Promise<void>((resolve) => (markFirstProgress = resolve));
    const importing = callApi(base, server.token, 'data.import', { workspace: target, file: ref.ref, mapping: BENCH_MAPPING }, {
      onProgress: () => {
        if (firstProgress === 0) {
          firstProgress = performance.now();
          markFirstProgress();
        }
      },
    }).then((r) => {
      importDone = performance.now();
      return r;
    });
    // Ask while the worker is busy with the file (its first progress line has arrived).
    await progressSeen;
    const list = await callApi(base, server.token, 'trials.list', { workspace: demo });
    listDone = performance.now();
    const imported = await importing;

    expect(list.result).toMatchObject({ ok: true });
    expect((list.result as { data: unknown[] }).data).toHaveLength(42);
    expect(imported.result).toMatchObject({ ok: true, data: { summary: { trials: 1000, plots: 1000 * PLOTS_PER_TRIAL } } });
    expect(imported.progress.some((p) => p.stage === 'store')).toBe(true);
    // Responsiveness: the other request finished before the import did.
    expect(listDone).toBeLessThan(importDone);
    expect(rowCounts(target).trials).toBe(42 + 1000);
  });

  it('cancels an import when the client aborts mid-store; the workspace file is byte-identical and its rows unchanged', async () => {
    const csv = join(dir, 'big.csv');
    await writePlotCsv(csv, 4000 * PLOTS_PER_TRIAL, 7);
    const ref = await upload(base, server.token, 'big.csv', readFileSync(csv));
    const target = join(dir, 'cancel.manyfield');
    copyFileSync(demo, target);
    const before = readFileSync(target);
    const countsBefore = rowCounts(target);

    const controller = new AbortController();
    const stages: string[] = [];
    const outcome = await callApi(base, server.token, 'data.import', { workspace: target, file: ref.ref, mapping: BENCH_MAPPING }, {
      signal: controller.signal,
      onProgress: (e) => {
        stages.push(e.stage);
        if (e.stage === 'store') controller.abort();
      },
    }).catch((e: Error) => e);
    expect(outcome).toBeInstanceOf(Error); // the client gave up on the answer
    expect(stages).toContain('store');

    // The job ends by rolling back; then the server answers again and the file is as it was.
    await waitFor(async () => (await callApi(base, server.token, 'trials.list', { workspace: target })).result?.ok === true);
    await waitForUnlocked(target);
    expect(rowCounts(target)).toEqual(countsBefore);
    expect(readFileSync(target).equals(before)).toBe(true);
  });
});

async function waitFor(check: () => Promise<boolean>): Promise<void> {
  for (let i = 0; i < 100; i++) {
    if (await check()) return;
    await new Promise((r) => setTimeout(r, 50));
  }
  throw new Error('timed out');
}

/** Waits until no writer holds the workspace (the cancelled job has rolled back and closed). */
async function waitForUnlocked(path: string): Promise<void> {
  for (let i = 0; i < 200; i++) {
    const ws = openWorkspace(path);
    try {
      ws.db.prepare('BEGIN IMMEDIATE').run();
      ws.db.prepare('ROLLBACK').run();
      return;
    } catch {
      await new Promise((r) => setTimeout(r, 50));
    } finally {
      ws.close();
    }
  }
  throw new Error('the workspace stayed locked');
}
