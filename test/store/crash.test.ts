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
function runChild(workspace: string, prefix: string, killAfterMs: number | null): Promise<ChildRun> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ['--import', 'tsx', CHILD, workspace, prefix, String(TRIALS_PER_IMPORT)], {
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

function inspect(file: string): { integrity: unknown; foreignKeys: unknown[]; counts: WorkspaceCounts } {
  const ws = openWorkspace(file);
  try {
    return { integrity: ws.db.pragma('integrity_check', { simple: true }), foreignKeys: ws.db.pragma('foreign_key_check') as unknown[], counts: counts(ws) };
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
      // Kill anywhere from the first row to a little after the usual end of the import.
      const run = await runChild(file, `K${k}`, Math.floor(rand() * span * 1.2));
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
    expect(outcomes.before).toBeGreaterThanOrEqual(KILLS / 3);
  }, 900_000);
});
