// Finding 4 of the new-user trial: a failed `analyze` stored an analysis anyway (`--out` to a
// missing folder exited 1, yet the stored analyses went from 4 to 5). Every failure path of
// analyze on a workspace now leaves the stored analyses — and the workspace file's bytes — as
// they were; a successful run stores exactly one.
import { describe, expect, it, beforeAll } from 'vitest';
import { existsSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { manyfield, tempDir } from '../support/cli.js';
import { api } from '../../src/api/handlers.js';
import { nitrogenMapping, writeNitrogenCsv } from '../support/nitrogenNetwork.js';
import { fileHash, storedAnalyses, writeJson } from './support.js';

const SPEC = {
  trait: 'yield',
  control: 'CTL',
  contrasts: [{ name: 'treated_vs_control', kind: 'treated-vs-control' as const }],
  oneStage: null,
  twoStage: { tau2: 'reml', interval: 'hksj' },
};

describe('a failed analyze stores nothing', () => {
  const dir = tempDir();
  const ws = join(dir, 'ws.manyfield');
  const good = join(dir, 'good.json');

  beforeAll(() => {
    const data = join(dir, 'network.csv');
    writeNitrogenCsv(data);
    expect(manyfield(['import', '--workspace', ws, '--file', data, '--map', writeJson(dir, 'map.json', nitrogenMapping())]).status).toBe(0);
    writeFileSync(good, JSON.stringify(SPEC));
    // Four stored analyses, as in the report of the finding.
    for (let i = 0; i < 4; i++) expect(manyfield(['analyze', '--workspace', ws, '--spec', good, '--json']).status).toBe(0);
    expect(storedAnalyses(ws)).toBe(4);
  });

  const failures: [string, () => string[]][] = [
    ['--out into a folder that does not exist', () => ['--spec', good, '--out', join(dir, 'no-such-folder', 'report.txt')]],
    ['--out onto a path that is a folder', () => ['--spec', good, '--out', dir]],
    ['a spec file that is not JSON', () => {
      const f = join(dir, 'broken.json');
      writeFileSync(f, '{"trait": "yield",');
      return ['--spec', f];
    }],
    ['a spec that breaks the schema', () => ['--spec', writeJson(dir, 'schema.json', { ...SPEC, twoStage: { tau2: 'nope' } })]],
    ['a spec naming a trait the workspace lacks', () => ['--spec', writeJson(dir, 'trait.json', { ...SPEC, trait: 'yeild' })]],
    ['a misspelled moderator', () => ['--spec', writeJson(dir, 'moderator.json', { ...SPEC, moderators: ['rian'] })]],
    ['an exclusion of a plot that does not exist', () => ['--spec', writeJson(dir, 'exclude.json', { ...SPEC, exclude: [{ trial: 'S1-2023', plot: '999', reason: 'x' }] })]],
    ['a contrast over an unknown treatment', () => ['--spec', writeJson(dir, 'contrast.json', { ...SPEC, contrasts: [{ name: 'c', coefficients: { CTL: -1, Z9: 1 } }] })]],
  ];

  for (const [what, args] of failures) {
    it(`${what}: exit 1, a message, the stored analyses and the file unchanged`, () => {
      const before = storedAnalyses(ws);
      const bytes = fileHash(ws);
      const r = manyfield(['analyze', '--workspace', ws, ...args()]);
      expect(r.status).toBe(1);
      expect(r.stderr).toMatch(/^manyfield: /);
      expect(storedAnalyses(ws)).toBe(before);
      expect(fileHash(ws)).toBe(bytes);
      // No half-written output is left beside the target.
      expect(readdirSync(dir).filter((f) => f.includes('.partial-'))).toEqual([]);
    });
  }

  it('--out to a missing folder fails before any work and says nothing was stored', () => {
    const r = manyfield(['analyze', '--workspace', ws, '--spec', good, '--out', join(dir, 'missing', 'r.txt')]);
    expect(r.stderr).toMatch(/the folder .*missing does not exist; nothing was analysed or stored/);
  });

  it('a successful run with --out writes the file and stores exactly one analysis', () => {
    const before = storedAnalyses(ws);
    const out = join(dir, 'report.json');
    const r = manyfield(['analyze', '--workspace', ws, '--spec', good, '--json', '--out', out]);
    expect(r.status).toBe(0);
    expect(existsSync(out)).toBe(true);
    expect(storedAnalyses(ws)).toBe(before + 1);
  });

  it('through the api: an output that cannot be taken (deliver throws) or a cancelled run stores nothing', async () => {
    const before = storedAnalyses(ws);
    const refused = await api['analysis.run']({ workspace: ws, spec: SPEC }, {
      deliver: () => {
        throw new Error('disk full');
      },
    });
    expect(refused.ok).toBe(false);
    if (!refused.ok) expect(refused.error.message).toMatch(/disk full/);
    const controller = new AbortController();
    controller.abort();
    const cancelled = await api['analysis.run']({ workspace: ws, spec: SPEC }, { signal: controller.signal });
    expect(cancelled.ok).toBe(false);
    if (!cancelled.ok) expect(cancelled.error.code).toBe('cancelled');
    expect(storedAnalyses(ws)).toBe(before);
    const fine = await api['analysis.run']({ workspace: ws, spec: SPEC }, { deliver: () => undefined });
    expect(fine.ok).toBe(true);
    expect(storedAnalyses(ws)).toBe(before + 1);
  });
});
