// The built command under hostile or unlucky conditions (hardening, issue 20): Ctrl-C during a
// long analysis, a reader that closes the pipe, formula-like cells in exports, huge or deep
// JSON, and a corrected file that replaces its earlier import.
import { spawn, spawnSync } from 'node:child_process';
import { readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { manyfield, tempDir } from '../support/cli.js';
import { writeMapping, writePlotFile } from './support/plotFiles.js';

const BIN = fileURLToPath(new URL('../../bin/manyfield.cjs', import.meta.url));
const DEMO_SPEC = fileURLToPath(new URL('../../examples/demo-analysis.json', import.meta.url));
const dir = tempDir('manyfield-hardening-');
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const demo = join(dir, 'demo.manyfield');

beforeAll(() => {
  const r = manyfield(['demo', '--workspace', demo]);
  expect(r.status).toBe(0);
}, 120_000);

function analysesIn(ws: string): number {
  const db = new Database(ws, { readonly: true });
  try {
    return (db.prepare('SELECT COUNT(*) AS n FROM analysis').get() as { n: number }).n;
  } finally {
    db.close();
  }
}

describe('Ctrl-C during a long analysis', () => {
  it('stops within a second, exits 130 and stores nothing', async () => {
    const spec = JSON.parse(readFileSync(DEMO_SPEC, 'utf8'));
    // The site-level pools with 100,000 bootstrap refits each: about 25 s of work on the demo
    // (the rate bootstrap, by draw counts, no longer lasts long enough at its 10,000 bound).
    const long = { ...spec, oneStage: null, rateResponse: null, twoStage: { ...spec.twoStage, levels: 'site-and-trial', siteLevelDraws: 100_000 } };
    const specFile = join(dir, 'long.json');
    writeFileSync(specFile, JSON.stringify(long));
    const before = analysesIn(demo);
    const child = spawn(process.execPath, [BIN, 'analyze', '--workspace', demo, '--spec', specFile, '--json'], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stderr = '';
    child.stderr.setEncoding('utf8').on('data', (c: string) => (stderr += c));
    const exited = new Promise<{ code: number | null; at: number }>((resolve) => child.on('exit', (code) => resolve({ code, at: performance.now() })));
    await new Promise((r) => setTimeout(r, 4000)); // well into the bootstrap
    const sent = performance.now();
    child.kill('SIGINT');
    const { code, at } = await exited;
    expect(at - sent).toBeLessThan(1000);
    expect(code).toBe(130);
    expect(stderr).toMatch(/cancelled by the user; nothing was stored/);
    expect(analysesIn(demo)).toBe(before);
  }, 60_000);

  it('bootstrap has an upper bound in the spec', () => {
    const spec = JSON.parse(readFileSync(DEMO_SPEC, 'utf8'));
    const specFile = join(dir, 'huge-bootstrap.json');
    writeFileSync(specFile, JSON.stringify({ ...spec, rateResponse: { ...spec.rateResponse, bootstrap: 1e9 } }));
    const r = manyfield(['analyze', '--workspace', demo, '--spec', specFile, '--no-save']);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/rateResponse\.bootstrap/);
    expect(r.stderr).toMatch(/10000/);
  });
});

describe('output to a pipe that closes early', () => {
  it('`analyze --json | head -c 200` ends quietly, without an EPIPE stack trace', () => {
    const spec = join(dir, 'pipe.json');
    const base = JSON.parse(readFileSync(DEMO_SPEC, 'utf8'));
    writeFileSync(spec, JSON.stringify({ ...base, oneStage: null, rateResponse: null }));
    const r = spawnSync('bash', ['-c', `set -o pipefail; "${process.execPath}" "${BIN}" analyze --workspace "${demo}" --spec "${spec}" --no-save --json | head -c 200 >/dev/null`], { encoding: 'utf8', timeout: 120_000 });
    expect(r.stderr).not.toMatch(/EPIPE|Error|\n\s+at /);
    expect(r.status).toBe(0);
  }, 120_000);
});

describe('exports that a spreadsheet opens', () => {
  it('neutralise formula-like text cells with a leading quote; numbers stay numbers', () => {
    const ws = join(dir, 'inject.manyfield');
    const hostile = ['=HYPERLINK("http://example.invalid","x")', "+cmd|' /C calc'!A0", '@SUM(1+1)', '-2+1'];
    const lines = ['site,year,block,trt,rate,ph,yield'];
    for (const [b, block] of [hostile[2], '\tB2'].entries()) {
      for (const [trt, rate] of [['CTL', 0], [hostile[1], 40], ['-1', 80]] as const) {
        lines.push([`"${hostile[0].replace(/"/g, '""')}"`, 2021, `"${block}"`, `"${trt}"`, rate, hostile[3], (5 + b + rate / 100).toFixed(2)].join(','));
      }
    }
    const file = join(dir, 'inject.csv');
    writeFileSync(file, `${lines.join('\n')}\n`);
    const map = join(dir, 'inject-map.json');
    writeFileSync(map, JSON.stringify({ columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield', factors: { rate: 'rate' }, covariates: ['ph'] }, trait: { name: 'yield', unit: 't/ha' }, control: 'CTL' }));
    const imported = manyfield(['import', '--workspace', ws, '--file', file, '--map', map]);
    expect(imported.stderr).toBe('');
    const out = join(dir, 'inject-export.csv');
    expect(manyfield(['export', '--workspace', ws, '--trait', 'yield', '--out', out]).status).toBe(0);
    const text = readFileSync(out, 'utf8');
    // No cell of the file begins with a formula character: each one is quoted text now.
    const cells = text.trimEnd().split('\n').slice(1).flatMap((l) => l.match(/("([^"]|"")*"|[^,]*)(,|$)/g)!.map((c) => c.replace(/,$/, '').replace(/^"|"$/g, '').replace(/""/g, '"')));
    for (const c of cells) if (/^[=+@\t\r]/.test(c) || (/^-/.test(c) && Number.isNaN(Number(c)))) throw new Error(`cell ${JSON.stringify(c)} would run as a formula`);
    expect(text).toContain(`'=HYPERLINK(""http://example.invalid"",""x"")`);
    expect(text).toContain("'+cmd|' /C calc'!A0");
    expect(text).toContain("'@SUM(1+1)");
    expect(text).toContain("'-2+1");
    expect(text).toContain("'\tB2");
    // A treatment coded "-1" is a number to a spreadsheet either way; it is left as it is.
    expect(text).toMatch(/,-1,80,/);
    expect(text).toMatch(/,5\.8\n/); // yields are written as plain numbers
  });
});

describe('hostile JSON for the command', () => {
  it('a spec nested 20,000 deep is refused naming the limit', () => {
    const spec = join(dir, 'deep.json');
    writeFileSync(spec, `{"trait":"yield","exclude":${'['.repeat(20000)}${']'.repeat(20000)}}`);
    const r = manyfield(['analyze', '--workspace', demo, '--spec', spec, '--no-save']);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/nested more than 32 levels/);
    expect(r.stderr).not.toMatch(/Maximum call stack|\n\s+at /);
  });

  it('a 20 MB control code is refused briefly, not echoed', () => {
    const mapping = join(dir, 'huge-map.json');
    writeFileSync(mapping, JSON.stringify({ columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield' }, trait: { name: 'yield', unit: 't/ha' }, control: 'C'.repeat(20 * 1024 * 1024) }));
    const r = manyfield(['import', '--workspace', join(dir, 'never.manyfield'), '--file', writePlotFile(dir, 'p.csv', ['North']), '--map', mapping]);
    expect(r.status).toBe(1);
    expect(r.stderr.length).toBeLessThan(1000);
    const spec = join(dir, 'long-control.json');
    writeFileSync(spec, JSON.stringify({ trait: 'yield', control: 'C'.repeat(500_000) }));
    const s = manyfield(['analyze', '--workspace', demo, '--spec', spec, '--no-save']);
    expect(s.status).toBe(1);
    expect(s.stderr).toMatch(/key "control": the text is 500000 characters long/);
    expect(s.stderr.length).toBeLessThan(1000);
  });

  it('prototype-named keys in a spec are data, never the object machinery', () => {
    const data = writePlotFile(dir, 'proto.csv', ['North', 'South', 'East']);
    const spec = join(dir, 'proto-spec.json');
    const text = JSON.stringify({
      trait: 'yield',
      columns: { trial: 'site', block: 'block', treatment: 'trt', response: 'yield', factors: { toString: 'rate' } },
      control: 'CTL',
      contrasts: [{ name: 'constructor', coefficients: { CTL: -2, A1: 1, A2: 1, toString: 0 } }, { name: 'hasOwnProperty', trend: 'toString', degree: 1 }],
      oneStage: null,
    });
    writeFileSync(spec, text.replace('"coefficients":{', '"coefficients":{"__proto__":0,'));
    const r = manyfield(['analyze', '--data', data, '--spec', spec, '--json']);
    expect(r.stderr).not.toMatch(/is not a function|\n\s+at /);
    expect([0, 1]).toContain(r.status);
  });
});

describe('a corrected file replaces its earlier import', () => {
  it('is refused listing every conflicting trial, then replaces them with --replace', () => {
    const ws = join(dir, 'replace.manyfield');
    const map = writeMapping(dir);
    const first = writePlotFile(dir, 'first.csv', ['North', 'South', 'East']);
    expect(manyfield(['import', '--workspace', ws, '--file', first, '--map', map]).status).toBe(0);
    const corrected = writePlotFile(dir, 'corrected.csv', ['North', 'South', 'East'], 40, 0.5);
    const refused = manyfield(['import', '--workspace', ws, '--file', corrected, '--map', map]);
    expect(refused.status).toBe(1);
    for (const site of ['North', 'South', 'East']) expect(refused.stderr).toContain(`trial "${site}-2021" at site "${site}" in 2021`);
    expect(refused.stderr).toMatch(/--replace/);
    const replaced = manyfield(['import', '--workspace', ws, '--file', corrected, '--map', map, '--replace', '--json']);
    expect(replaced.status).toBe(0);
    expect(JSON.parse(replaced.stdout).summary.replaced).toMatchObject({ trials: 3, plots: 18 });
    const out = join(dir, 'replaced.csv');
    expect(manyfield(['export', '--workspace', ws, '--trait', 'yield', '--out', out]).status).toBe(0);
    const yields = readFileSync(out, 'utf8').trimEnd().split('\n').slice(1).map((l) => Number(l.split(',').at(-1)));
    const firstYields = readFileSync(first, 'utf8').trimEnd().split('\n').slice(1).map((l) => Number(l.split(',').at(-1)));
    expect(yields).toHaveLength(18);
    expect(yields.reduce((a, b) => a + b, 0)).toBeCloseTo(firstYields.reduce((a, b) => a + b, 0) + 18 * 0.5, 6);
  });
});
