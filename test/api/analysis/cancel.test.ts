// Long analyses can be stopped and stop storing nothing (hardening, issue 20, finding 4): the
// api's abort ends a bootstrap that never yields within a second; a computed result waits for a
// busy workspace instead of being thrown away after 5 seconds.
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { api } from '../../../src/api/handlers.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-cancel-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const ws = join(dir, 'demo.manyfield');
const demoSpec = JSON.parse(readFileSync(fileURLToPath(new URL('../../../examples/demo-analysis.json', import.meta.url)), 'utf8'));

beforeAll(async () => {
  expect((await api['demo.build']({ workspace: ws })).ok).toBe(true);
}, 120_000);

function analyses(): number {
  const db = new Database(ws, { readonly: true });
  try {
    return (db.prepare('SELECT COUNT(*) AS n FROM analysis').get() as { n: number }).n;
  } finally {
    db.close();
  }
}

describe('stopping an analysis', () => {
  it('the api abort stops a 10,000-resample bootstrap within a second and stores nothing', async () => {
    const spec = { ...demoSpec, oneStage: null, twoStage: null, rateResponse: { ...demoSpec.rateResponse, bootstrap: 10_000 } };
    const before = analyses();
    const controller = new AbortController();
    let bootstrapping = false;
    const run = api['analysis.run']({ workspace: ws, spec, save: true }, { signal: controller.signal, onProgress: (e) => (bootstrapping ||= e.step === 'bootstrap') });
    let settled: unknown = null;
    void run.then((x) => (settled = x));
    const started = performance.now();
    while (!bootstrapping && settled === null && performance.now() - started < 60_000) await new Promise((r) => setTimeout(r, 50));
    expect(settled).toBeNull(); // still running
    expect(bootstrapping).toBe(true);
    await new Promise((r) => setTimeout(r, 500)); // inside the loop
    const sent = performance.now();
    controller.abort();
    const r = await run;
    expect(performance.now() - sent).toBeLessThan(1000);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error).toMatchObject({ code: 'cancelled', message: 'cancelled by the user; nothing was stored' });
    expect(analyses()).toBe(before);
  }, 90_000);
});

describe('saving into a busy workspace', () => {
  it('waits for another process to finish writing instead of discarding the result', async () => {
    const before = analyses();
    // Another process holds the write lock for 7 s (longer than the 5 s wait of other writes).
    const holder = spawn(process.execPath, ['-e', `const D=require('better-sqlite3');const d=new D(${JSON.stringify(ws)});d.prepare('BEGIN IMMEDIATE').run();console.log('locked');setTimeout(()=>{d.prepare('ROLLBACK').run();d.close();},7000);`], { cwd: fileURLToPath(new URL('../../../', import.meta.url)), stdio: ['ignore', 'pipe', 'inherit'] });
    await new Promise<void>((resolve) => holder.stdout.once('data', () => resolve()));
    const spec = { ...demoSpec, oneStage: null, rateResponse: null };
    const r = await api['analysis.run']({ workspace: ws, spec, save: true });
    expect(r.ok).toBe(true);
    expect(analyses()).toBe(before + 1);
    await new Promise((resolve) => holder.on('exit', resolve));
  }, 90_000);
});
