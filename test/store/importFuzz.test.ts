// Imports of damaged or hostile files into one existing workspace (hardening, issue 20): each
// either stores the whole file or changes nothing — 0 partial writes — and the workspace stays
// sound. This is the part of the fuzz suite that touches the disk, so it runs fewer cases.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { api } from '../../src/api/handlers.js';
import { counts, openWorkspace, type WorkspaceCounts } from '../../src/store/index.js';
import { MAPPING, toCsv, validRows } from '../intake/helpers.js';

const SEED = 777;
const dir = mkdtempSync(join(tmpdir(), 'manyfield-import-fuzz-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const ws = join(dir, 'w.manyfield');

function snapshot(): { counts: WorkspaceCounts; integrity: unknown } {
  const w = openWorkspace(ws);
  try {
    return { counts: counts(w), integrity: w.db.pragma('quick_check', { simple: true }) };
  } finally {
    w.close();
  }
}

const TOKENS = ['=1+1', '+cmd', '@x', '-2+1', 'toString', '__proto__', '1e309', 'NaN', '-5', '1,234', '"', ',', '\n', '', 'CTL', 'A1', '999999', 'Müller'];
let fileNo = 0;

describe('imports of damaged files into an existing workspace', () => {
  it('store the whole file or change nothing (150 runs)', async () => {
    const base = join(dir, 'base.csv');
    writeFileSync(base, toCsv(validRows(['Base'])));
    expect((await api['data.import']({ workspace: ws, file: base, mapping: { ...MAPPING, trait: { name: 'yield', unit: 't/ha', lower: 0 } } })).ok).toBe(true);
    let stored = 0;
    await fc.assert(
      fc.asyncProperty(
        fc.array(fc.tuple(fc.nat(), fc.nat(), fc.constantFrom(...TOKENS)), { maxLength: 4 }),
        fc.option(fc.nat()),
        fc.boolean(),
        async (edits, cut, replace) => {
          const n = fileNo++;
          const rows = validRows([`S${n}`, `T${n}`]);
          for (const [r, c, v] of edits) rows[r % rows.length][c % rows[0].length] = v;
          let text = toCsv(rows);
          if (cut !== null) text = text.slice(0, cut % (text.length + 1));
          const file = join(dir, `f${n}.csv`);
          writeFileSync(file, text);
          const before = snapshot();
          const r = await api['data.import']({ workspace: ws, file, mapping: MAPPING, replace });
          const after = snapshot();
          expect(after.integrity).toBe('ok');
          if (r.ok) {
            stored++;
            const s = r.data.summary;
            expect(after.counts.trials).toBe(before.counts.trials + s.trials - (s.replaced?.trials ?? 0));
            expect(after.counts.plots).toBe(before.counts.plots + s.plots - (s.replaced?.plots ?? 0));
            expect(after.counts.observations).toBe(before.counts.observations + s.observations - (s.replaced?.observations ?? 0));
          } else {
            expect(r.error.code).not.toBe('internal');
            expect(after.counts).toEqual(before.counts);
          }
        },
      ),
      { numRuns: 150, seed: SEED },
    );
    // Some imports went through, so both branches were exercised.
    expect(stored).toBeGreaterThan(10);
  }, 300_000);
});
