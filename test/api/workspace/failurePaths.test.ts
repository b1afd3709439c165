// Failing and unusual paths through the workspace handlers (hardening, issue 20): symbolic
// links resolved once and handled as their target, a read-only workspace still listed,
// exported and analysed without saving, folders and busy workspaces named with what to do.
import { existsSync, lstatSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, readlinkSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, describe, expect, it } from 'vitest';
import { api } from '../../../src/api/handlers.js';
import { createWorkspaceWith, explainSqliteError, openWorkspace } from '../../../src/store/index.js';
import { canMountDisks, smallDisk } from '../../support/tmpfs.js';
import { MAPPING, toCsv, validRows } from '../../intake/helpers.js';

const root = mkdtempSync(join(tmpdir(), 'manyfield-failure-paths-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));
let n = 0;
const fresh = (): string => {
  const d = join(root, String(n++));
  mkdirSync(d);
  return d;
};

function plotFile(dir: string, sites = ['North', 'South']): string {
  const file = join(dir, `plots-${sites.join('-')}.csv`);
  writeFileSync(file, toCsv(validRows(sites)));
  return file;
}

describe('symbolic links', () => {
  it('a failing first import through a link leaves neither the target nor its -wal, and keeps the link', async () => {
    const dir = fresh();
    const target = join(dir, 'real.manyfield');
    const link = join(dir, 'link.manyfield');
    symlinkSync(target, link);
    const r = await api['data.import'](
      { workspace: link, file: plotFile(dir), mapping: MAPPING },
      {
        onProgress: (e) => {
          if (e.stage === 'store') throw new Error('stopped while storing');
        },
      },
    );
    expect(r.ok).toBe(false);
    for (const f of [target, `${target}-wal`, `${target}-shm`]) expect(existsSync(f)).toBe(false);
    expect(lstatSync(link).isSymbolicLink()).toBe(true);
    expect(readdirNames(dir)).toEqual(['link.manyfield', 'plots-North-South.csv']);
  });

  it('a successful import through a link creates the target; the link stays a link', async () => {
    const dir = fresh();
    const target = join(dir, 'real.manyfield');
    const link = join(dir, 'link.manyfield');
    symlinkSync('real.manyfield', link); // relative, as users make them
    const r = await api['data.import']({ workspace: link, file: plotFile(dir), mapping: MAPPING });
    expect(r.ok && r.data.created).toBe(true);
    expect(lstatSync(link).isSymbolicLink()).toBe(true);
    const listed = await api['trials.list']({ workspace: target });
    expect(listed.ok && listed.data.length).toBe(4);
  });

  it('demo --replace through a link rebuilds the target and keeps the link', async () => {
    const dir = fresh();
    const target = join(dir, 'real.manyfield');
    const link = join(dir, 'demo.manyfield');
    symlinkSync(target, link);
    expect((await api['demo.build']({ workspace: link })).ok).toBe(true);
    const r = await api['demo.build']({ workspace: link, replace: true });
    expect(r.ok).toBe(true);
    expect(lstatSync(link).isSymbolicLink()).toBe(true);
    expect(readlinkSync(link)).toBe(target);
    const listed = await api['trials.list']({ workspace: target });
    expect(listed.ok && listed.data.length).toBeGreaterThan(30);
  }, 120_000);
});

function readdirNames(dir: string): string[] {
  return readdirSync(dir).sort();
}

describe('messages that name the path and what to do', () => {
  it('a folder given as the workspace', async () => {
    const dir = fresh();
    const r = await api['trials.list']({ workspace: dir });
    expect(r.ok).toBe(false);
    if (!r.ok) {
      expect(r.error.message).toContain(`"${dir}" is a folder, not a workspace file`);
      expect(r.error.message).not.toMatch(/unable to open database file/);
    }
  });

  it('a workspace busy with another writer: refused with "busy" and the path, nothing lost', async () => {
    const dir = fresh();
    const ws = join(dir, 'w.manyfield');
    expect((await api['data.import']({ workspace: ws, file: plotFile(dir, ['North']), mapping: MAPPING })).ok).toBe(true);
    const holder = new Database(ws);
    holder.prepare('BEGIN IMMEDIATE').run(); // another process's write lock, held past the 5 s wait
    try {
      const r = await api['data.import']({ workspace: ws, file: plotFile(dir, ['South']), mapping: MAPPING });
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.error.message).toMatch(new RegExp(`workspace "${ws.replace(/[.*+?^${}()|[\]\\/]/g, '\\$&')}" is busy`));
    } finally {
      holder.prepare('ROLLBACK').run();
      holder.close();
    }
    const listed = await api['trials.list']({ workspace: ws });
    expect(listed.ok && listed.data.map((t) => t.site)).toEqual(['North', 'North']);
  }, 30_000);

  it('SQLite codes become messages naming the workspace', () => {
    const e = (code: string): string => (explainSqliteError(Object.assign(new Error('raw'), { code }), '/data/w.manyfield') as Error).message;
    expect(e('SQLITE_BUSY')).toMatch(/^workspace "\/data\/w\.manyfield" is busy/);
    expect(e('SQLITE_READONLY')).toMatch(/^workspace "\/data\/w\.manyfield" is read-only .* "analyze --no-save" still work/);
    expect(e('SQLITE_FULL')).toMatch(/disk holding workspace "\/data\/w\.manyfield" is full/);
    expect(e('SQLITE_CANTOPEN')).toMatch(/^cannot open workspace "\/data\/w\.manyfield"/);
  });
});

describe('creating a workspace', () => {
  it('when another process creates the same workspace meanwhile, its file is left alone', () => {
    const dir = fresh();
    const target = join(dir, 'w.manyfield');
    const made = createWorkspaceWith(target, () => {
      writeFileSync(target, 'the other process was first'); // appears while this one builds
      return 1;
    });
    expect(made.created).toBe(false);
    expect(readFileSync(target, 'utf8')).toBe('the other process was first');
    expect(readdirNames(dir)).toEqual(['w.manyfield']); // the private build file is gone
  });

  it('a workspace created by import opens cleanly, in WAL mode', async () => {
    const dir = fresh();
    const ws = join(dir, 'w.manyfield');
    const r = await api['data.import']({ workspace: ws, file: plotFile(dir), mapping: MAPPING });
    expect(r.ok && r.data.created).toBe(true);
    const opened = openWorkspace(ws);
    expect(opened.db.pragma('journal_mode', { simple: true })).toBe('wal');
    expect(opened.db.pragma('integrity_check', { simple: true })).toBe('ok');
    opened.close();
  });
});

describe.skipIf(!canMountDisks)('a read-only workspace (read-only tmpfs; needs root)', () => {
  it('is listed, exported and analysed without saving; saving names the path and the way out', async () => {
    const disk = smallDisk(8 << 20)!;
    try {
      const ws = join(disk.dir, 'w.manyfield');
      expect((await api['data.import']({ workspace: ws, file: plotFile(fresh()), mapping: MAPPING })).ok).toBe(true);
      disk.readOnly();
      const listed = await api['trials.list']({ workspace: ws });
      expect(listed.ok && listed.data.length).toBe(4);
      const exported = await api['data.export']({ workspace: ws, trait: 'yield' });
      expect(exported.ok && exported.data.rows.length).toBe(40);
      const spec = { trait: 'yield', control: 'CTL', contrasts: [{ name: 'tvc', kind: 'treated-vs-control' as const }], oneStage: null };
      const unsaved = await api['analysis.run']({ workspace: ws, spec, save: false });
      expect(unsaved.ok).toBe(true);
      const saved = await api['analysis.run']({ workspace: ws, spec, save: true });
      expect(saved.ok).toBe(false);
      if (!saved.ok) {
        expect(saved.error.message).toContain(`"${ws}"`);
        expect(saved.error.message).toMatch(/read-only|cannot be opened/);
      }
    } finally {
      disk.release();
    }
  });
});
