// Crash safety: kill an importing process (SIGKILL) at seeded random moments, then check that
// the workspace opens cleanly and holds exactly its content from before the import, or the
// complete import when the commit had finished. Nothing in between, ever.
import { spawn } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { mulberry32 } from '../../src/engine/stats/random.js';
import { counts, importParsedTable, openWorkspace, type WorkspaceCounts } from '../../src/store/index.js';
import { syntheticTable } from './support/syntheticTable.js';
import { tempDirs } from './support/temp.js';

const newDir = tempDirs();
const CHILD = fileURLToPath(new URL('./support/crashChild.ts', import.meta.url));
const REPO = fileURLToPath(new URL('../../', import.meta.url));
const KILLS = 24;
const TRIALS_PER_IMPORT = 3000; // 84,000 plots + 84,000 observations per attempt
const SEED = 20261201;

interface ChildRun {
  readonly said: string[];
  /** ms from "importing" to exit (natural or killed). */
  readonly importMs: number;
  readonly killed: boolean;
}

/** Run the child; kill it `killAfterMs` after it starts importing (never, if null). */
function runChild(workspace: string, prefix: string, killAfterMs: number | null, replaceSeed?: number): Promise<ChildRun> {
  return new Promise((resolve, reject) => {
    const extra = replaceSeed === undefined ? [] : [String(replaceSeed)];
    const child = spawn(process.execPath, ['--import', 'tsx', CHILD, workspace, prefix, String(TRIALS_PER_IMPORT), ...extra], {
      cwd: REPO,
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    const said: string[] = [];
    let stderr = '';
    let started = 0;
    let buffered = '';
    child.stdout.setEncoding('utf8').on('data', (chunk: string) => {
      buffered += chunk;
      const lines = buffered.split('\n');
      buffered = lines.pop()!;
      for (const line of lines) {
        said.push(line);
        if (line === 'importing') {
          started = performance.now();
          if (killAfterMs !== null) setTimeout(() => child.kill('SIGKILL'), killAfterMs);
        }
      }
    });
    child.stderr.setEncoding('utf8').on('data', (c: string) => (stderr += c));
    child.on('error', reject);
    child.on('exit', (code, signal) => {
      if (signal === null && code !== 0) reject(new Error(`child failed (${code}): ${stderr}`));
      else resolve({ said, importMs: started ? performance.now() - started : 0, killed: signal === 'SIGKILL' });
    });
  });
}

function inspect(file: string): { integrity: unknown; foreignKeys: unknown[]; counts: WorkspaceCounts; valueSum: number } {
  const ws = openWorkspace(file);
  try {
    return {
      integrity: ws.db.pragma('integrity_check', { simple: true }),
      foreignKeys: ws.db.pragma('foreign_key_check') as unknown[],
      counts: counts(ws),
      // Values have 3 decimals: summing them in thousandths as integers is exact in any order.
      valueSum: (ws.db.prepare('SELECT COALESCE(SUM(CAST(ROUND(value * 1000) AS INTEGER)), 0) AS s FROM observation').get() as { s: number }).s,
    };
  } finally {
    ws.close();
  }
}

function plus(c: WorkspaceCounts, sitesAdded: number): WorkspaceCounts {
  const plots = TRIALS_PER_IMPORT * 28;
  return { sites: c.sites + sitesAdded, trials: c.trials + TRIALS_PER_IMPORT, plots: c.plots + plots, observations: c.observations + plots, importBatches: c.importBatches + 1 };
}

describe('crash safety of an import', () => {
  it(`survives ${KILLS} SIGKILLs at random moments with exactly the before or the complete after content`, async () => {
    const file = path.join(newDir(), 'crash.manyfield');
    const ws = openWorkspace(file, { create: true });
    importParsedTable(ws, syntheticTable({ trials: 40, prefix: 'Base' }));
    ws.close();
    const sitesPerImport = new Set(syntheticTable({ trials: TRIALS_PER_IMPORT, prefix: 'P' }).trials.map((t) => t.site)).size;

    // One undisturbed run measures how long an import takes here, and checks the "after" case.
    let before = inspect(file).counts;
    const full = await runChild(file, 'Full', null);
    expect(full.said).toEqual(['importing', 'committed', 'closed']);
    expect(inspect(file).counts).toEqual(plus(before, sitesPerImport));
    const span = Math.max(full.importMs, 200);

    const rand = mulberry32(SEED);
    const outcomes = { before: 0, after: 0 };
    for (let k = 0; k < KILLS; k++) {
      before = inspect(file).counts;
      // Kill anywhere in the first 90% of the usual import time (machine load moves the real end).
      const run = await runChild(file, `K${k}`, Math.floor(rand() * span * 0.9));
      const seen = inspect(file);
      expect(seen.integrity, `kill ${k}`).toBe('ok');
      expect(seen.foreignKeys, `kill ${k}`).toEqual([]);
      if (run.said.includes('committed')) {
        expect(seen.counts, `kill ${k} after commit`).toEqual(plus(before, sitesPerImport));
        outcomes.after++;
      } else if (seen.counts.trials === before.trials) {
        expect(seen.counts, `kill ${k} before commit`).toEqual(before);
        outcomes.before++;
      } else {
        // Killed between the commit and the message saying so: must be the complete import.
        expect(seen.counts, `kill ${k} during commit`).toEqual(plus(before, sitesPerImport));
        outcomes.after++;
      }
      expect(run.killed || run.said.includes('closed'), `kill ${k}`).toBe(true);
    }
    console.log(`crash test: ${KILLS} kills, ${outcomes.before} left the workspace as before, ${outcomes.after} after a finished commit (import takes ~${Math.round(span)} ms here)`);
    // The seeded delays must actually interrupt imports, or the test proves nothing.
    expect(outcomes.before).toBeGreaterThanOrEqual(KILLS / 4);
  }, 900_000);
});

describe('crash safety of a replacing import', () => {
  const REPLACE_KILLS = 10;
  it(`keeps the old batch intact when a --replace import is killed (${REPLACE_KILLS} seeded SIGKILLs)`, async () => {
    const file = path.join(newDir(), 'replace.manyfield');
    const ws = openWorkspace(file, { create: true });
    importParsedTable(ws, syntheticTable({ trials: 40, prefix: 'Base' }));
    importParsedTable(ws, syntheticTable({ trials: TRIALS_PER_IMPORT, prefix: 'R', seed: 7 }));
    ws.close();
    const sum = (t: ReturnType<typeof syntheticTable>) => t.observations.reduce((a, o) => a + (o.value === null ? 0 : Math.round(o.value * 1000)), 0);
    const baseSum = sum(syntheticTable({ trials: 40, prefix: 'Base' }));

    const first = inspect(file);
    const timed = await runChild(file, 'R', null, 100);
    const span = Math.max(timed.importMs, 200);
    const rand = mulberry32(SEED + 1);
    const outcomes = { before: 0, after: 0 };
    let before = inspect(file);
    expect(before.counts).toEqual(first.counts); // same sizes, new values
    expect(before.valueSum).toBe(baseSum + sum(syntheticTable({ trials: TRIALS_PER_IMPORT, prefix: 'R', seed: 100 })));
    for (let k = 0; k < REPLACE_KILLS; k++) {
      const seed = 101 + k;
      const replacementSum = baseSum + sum(syntheticTable({ trials: TRIALS_PER_IMPORT, prefix: 'R', seed }));
      const run = await runChild(file, 'R', Math.floor(rand() * span * 0.9), seed);
      const seen = inspect(file);
      expect(seen.integrity, `kill ${k}`).toBe('ok');
      expect(seen.foreignKeys, `kill ${k}`).toEqual([]);
      expect(seen.counts, `kill ${k}`).toEqual(before.counts);
      if (seen.valueSum === before.valueSum) {
        expect(run.said.includes('committed'), `kill ${k}`).toBe(false);
        outcomes.before++;
      } else {
        expect(seen.valueSum, `kill ${k}`).toBe(replacementSum);
        outcomes.after++;
      }
      before = seen;
    }
    console.log(`replace crash test: ${REPLACE_KILLS} kills, ${outcomes.before} kept the old batch, ${outcomes.after} after a finished commit`);
    expect(outcomes.before).toBeGreaterThanOrEqual(REPLACE_KILLS / 4);
  }, 600_000);
});
