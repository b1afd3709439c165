// Two imports at once, as separate processes of the built command (hardening, issue 20,
// finding 1): into a workspace that does not exist yet and into an existing one. Whatever the
// order, every import that reports success is in the workspace afterwards, a failing one
// changes nothing, and the file stays a sound workspace. 50 paired runs of each kind.
import { spawn } from 'node:child_process';
import { copyFileSync, existsSync, mkdirSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { manyfield, tempDir } from '../support/cli.js';
import { writeMapping, writePlotFile } from './support/plotFiles.js';

const BIN = fileURLToPath(new URL('../../bin/manyfield.cjs', import.meta.url));
const RUNS = 50;
const PARALLEL_PAIRS = 4; // 8 processes at once: most of their time is start-up and waiting

interface Run {
  readonly status: number;
  readonly stderr: string;
}

function run(args: readonly string[]): Promise<Run> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [BIN, ...args], { stdio: ['ignore', 'ignore', 'pipe'] });
    let stderr = '';
    child.stderr.setEncoding('utf8').on('data', (c: string) => (stderr += c));
    child.on('close', (code) => resolve({ status: code ?? -1, stderr }));
  });
}

const dir = tempDir('manyfield-concurrency-');
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let mapping = '';
// A and C agree on every rate (different sites); B gives A1 another rate than A (a conflict).
const files: Record<'A' | 'B' | 'C', { file: string; sites: string[] }> = {} as never;
let template = '';

beforeAll(() => {
  mapping = writeMapping(dir);
  files.A = { file: writePlotFile(dir, 'a.csv', ['North', 'East']), sites: ['North', 'East'] };
  files.B = { file: writePlotFile(dir, 'b.csv', ['South', 'West'], 50), sites: ['South', 'West'] };
  files.C = { file: writePlotFile(dir, 'c.csv', ['Hill', 'Vale']), sites: ['Hill', 'Vale'] };
  template = join(dir, 'template.manyfield');
  const r = manyfield(['import', '--workspace', template, '--file', writePlotFile(dir, 'base.csv', ['Base']), '--map', mapping]);
  expect(r.stderr).toBe('');
});

/** Sites stored, with their plot counts; and the integrity check. */
function stored(ws: string): { sites: Map<string, number>; integrity: unknown } {
  const db = new Database(ws, { readonly: true });
  try {
    const rows = db.prepare('SELECT s.code, COUNT(p.id) AS plots FROM site s JOIN trial t ON t.site_id = s.id JOIN plot p ON p.trial_id = t.id GROUP BY s.code').all() as { code: string; plots: number }[];
    return { sites: new Map(rows.map((r) => [r.code, r.plots])), integrity: db.pragma('integrity_check', { simple: true }) };
  } finally {
    db.close();
  }
}

const PAIRS = [['A', 'B'], ['A', 'A'], ['A', 'C']] as const;

async function pairedRun(i: number, existing: boolean): Promise<string[]> {
  const folder = join(dir, `${existing ? 'existing' : 'new'}-${i}`);
  mkdirSync(folder);
  const ws = join(folder, 'w.manyfield');
  if (existing) copyFileSync(template, ws);
  const [x, y] = PAIRS[i % PAIRS.length];
  const runs = await Promise.all([x, y].map((k) => run(['import', '--workspace', ws, '--file', files[k].file, '--map', mapping])));
  const faults: string[] = [];
  const say = (m: string): number => faults.push(`run ${i} (${existing ? 'existing' : 'new'}, ${x}+${y}): ${m}`);
  const ok = runs.map((r) => r.status === 0);
  if (!existsSync(ws)) {
    if (ok.some(Boolean)) say('an import reported success but there is no workspace');
    return faults;
  }
  const { sites, integrity } = stored(ws);
  if (integrity !== 'ok') say(`integrity check: ${String(integrity)}`);
  [x, y].forEach((k, j) => {
    const r = runs[j];
    if (r.status === 0) {
      for (const s of files[k].sites) if (sites.get(s) !== 6) say(`import of ${k} reported success but site ${s} holds ${sites.get(s) ?? 0} plots`);
    } else {
      if (r.status !== 1) say(`import of ${k} exited ${r.status}`);
      if (!/^manyfield: /.test(r.stderr) || /\n\s+at /.test(r.stderr)) say(`import of ${k} failed without a clean message: ${r.stderr.slice(0, 300)}`);
      if (!/already|rate|busy/.test(r.stderr)) say(`import of ${k} failed for an unexpected reason: ${r.stderr.slice(0, 300)}`);
    }
  });
  if (!ok.some(Boolean)) say('both imports failed');
  if (existing && sites.get('Base') !== 6) say('the workspace lost the data it held before');
  // Compatible files (A + C) both succeed, one after the other, unless one was refused as busy.
  if (x === 'A' && y === 'C' && !ok.every(Boolean) && !runs.some((r) => /busy/.test(r.stderr))) say('compatible imports did not both succeed');
  // Only data the successful imports brought (and the base) is stored.
  const expected = new Set([...(existing ? ['Base'] : []), ...[x, y].flatMap((k, j) => (ok[j] ? files[k].sites : []))]);
  if ([...sites.keys()].some((s) => !expected.has(s))) say(`unexpected sites stored: ${[...sites.keys()].join(', ')}`);
  return faults;
}

async function manyRuns(existing: boolean): Promise<string[]> {
  const faults: string[] = [];
  for (let i = 0; i < RUNS; i += PARALLEL_PAIRS) {
    const batch = await Promise.all(Array.from({ length: Math.min(PARALLEL_PAIRS, RUNS - i) }, (_, k) => pairedRun(i + k, existing)));
    faults.push(...batch.flat());
  }
  return faults;
}

describe('two imports at once (separate processes of the built command)', () => {
  it(`into a workspace that does not exist yet: no import reported as done is lost (${RUNS} paired runs)`, async () => {
    expect(await manyRuns(false)).toEqual([]);
  }, 600_000);

  it(`into an existing workspace: both stored in turn, or one refused, nothing lost (${RUNS} paired runs)`, async () => {
    expect(await manyRuns(true)).toEqual([]);
  }, 600_000);
});
