// Analysis payloads stored compressed (src/store/storedJson.ts): a large payload goes in as a
// DEFLATE BLOB, a small one as text, and both — and a row written as plain JSON text before
// compression existed — read back equal to what was saved (numbers bit for bit: JSON text is
// compressed losslessly). Reference: the saved object itself, and Node's zlib for the format.
import path from 'node:path';
import { inflateRawSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { decodeStoredJson, encodeStoredJson, DEFLATE_FROM } from '../../src/store/storedJson.js';
import { loadAnalysis, openWorkspace, saveAnalysis } from '../../src/store/index.js';
import { tempDirs } from './support/temp.js';

const newDir = tempDirs();

describe('stored analysis JSON', () => {
  const big = { values: Array.from({ length: 2000 }, (_, i) => Math.sin(i) / 3), names: Array.from({ length: 2000 }, (_, i) => `T${i}`) };

  it('deflates a large payload losslessly and keeps a small one as text', () => {
    const stored = encodeStoredJson(big);
    expect(Buffer.isBuffer(stored)).toBe(true);
    expect((stored as Buffer).length).toBeLessThan(JSON.stringify(big).length / 2);
    expect(inflateRawSync(stored as Buffer).toString('utf8')).toBe(JSON.stringify(big));
    expect(decodeStoredJson(stored)).toEqual(big);
    const small = { k: 3, warnings: ['w'] };
    expect(JSON.stringify(small).length).toBeLessThan(DEFLATE_FROM);
    expect(encodeStoredJson(small)).toBe(JSON.stringify(small));
    expect(decodeStoredJson(JSON.stringify(small))).toEqual(small);
  });

  it('a saved analysis reads back whole, and a row written as plain text beside it reads as it is', () => {
    const ws = openWorkspace(path.join(newDir(), 'w.manyfield'), { create: true });
    try {
      const report = { trait: 'yield', oneStage: { logLik: -3.5, big }, warnings: ['w'] };
      const id = saveAnalysis(ws, { trait: 'yield' }, 'f'.repeat(64), report);
      const kinds = ws.db.prepare('SELECT kind, typeof(payload_json) AS t FROM analysis_result WHERE analysis_id = ? ORDER BY kind').all(id);
      expect(kinds).toEqual([
        { kind: 'oneStage', t: 'blob' },
        { kind: 'trait', t: 'text' },
        { kind: 'warnings', t: 'text' },
      ]);
      // as an analysis saved before compression stored it: plain JSON text, however large
      ws.db.prepare("UPDATE analysis_result SET payload_json = ? WHERE analysis_id = ? AND kind = 'warnings'").run(JSON.stringify(big.names), id);
      const back = loadAnalysis(ws, id).results;
      expect(back).toEqual({ ...report, warnings: big.names });
    } finally {
      ws.close();
    }
  });
});
