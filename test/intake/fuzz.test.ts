// Property-based fuzzing: whatever bytes arrive, the readers either return a consistent table
// or throw an IntakeError whose problems name the file; never another exception, never a hang.
// Each case must finish within CASE_LIMIT_MS (a generous bound on a shared 2-core machine; a
// linear-time reader takes a few milliseconds on these inputs). numRuns are stated per property.
import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { strToU8, zipSync } from 'fflate';
import { describe, expect, it } from 'vitest';
import { parseMapping, readPlotFile, readSummaryFile } from '../../src/intake/index.js';
import { IntakeError, type ImportMapping, type ParsedPlotTable } from '../../src/intake/types.js';
import { JsonShapeError, MAX_JSON_DEPTH, parseBoundedJson } from '../../src/intake/jsonInput.js';
import { HEADER, MAPPING, toCsv, validRows, writeTemp } from './helpers.js';
import { buildXlsx } from './xlsxBuilder.js';

const CASE_LIMIT_MS = 3000;
const SEED = 424242;

function checkTable(t: ParsedPlotTable): void {
  expect(t.observations.length).toBeGreaterThanOrEqual(t.plots.length);
  for (const o of t.observations) {
    expect(o.plot).toBeGreaterThanOrEqual(0);
    expect(o.plot).toBeLessThan(t.plots.length);
    expect(o.value === null || Number.isFinite(o.value)).toBe(true);
  }
  const keys = new Set(t.trials.map((x) => x.key));
  for (const p of t.plots) expect(keys.has(p.trialKey)).toBe(true);
}

/** Reads a file; fails the property on any exception other than a well-formed IntakeError, or on a slow case. */
async function readsCleanly(content: string | Uint8Array, mapping: ImportMapping, name = 'fuzz.csv'): Promise<void> {
  const path = writeTemp(name, content);
  const t0 = performance.now();
  try {
    checkTable(await readPlotFile(path, mapping));
  } catch (e) {
    if (!(e instanceof IntakeError)) throw e;
    expect(e.problems.length).toBeGreaterThan(0);
    expect(e.problems.length).toBeLessThanOrEqual(200);
    for (const p of e.problems) {
      expect(p.file).toBe(path);
      expect(p.value === null || p.value.length <= 240).toBe(true);
      expect(p.message.length).toBeLessThanOrEqual(1003);
      expect(Number.isInteger(p.row) && p.row >= 0).toBe(true);
      expect(p.rule).toMatch(/^[a-z-]+$/);
    }
  }
  expect(performance.now() - t0).toBeLessThan(CASE_LIMIT_MS);
}

const VALID = toCsv(validRows());
const CSVISH_TOKENS = ['site', 'year', 'block', 'trt', 'rate', 'timing', 'yield', 'CTL', 'A1', 'North', '2021', '20x1', '1', '2', '40', '12,4', '12,4x', '5.5', '-3e2', 'NA', '', ' ', '"', '""', ',', ';', '\t', '|', '\n', '\r\n', '\r', '\uFEFF', 'é', '\u0000'];

describe('fuzzing the plot-file reader', () => {
  it('random bytes (1000 runs)', async () => {
    await fc.assert(
      fc.asyncProperty(fc.uint8Array({ maxLength: 4096 }), (bytes) => readsCleanly(bytes, MAPPING)),
      { numRuns: 1000, seed: SEED },
    );
  });

  it('random CSV-ish text built from header words, codes, numbers, quotes and delimiters (2000 runs)', async () => {
    const text = fc.array(fc.oneof(fc.constantFrom(...CSVISH_TOKENS), fc.string({ maxLength: 6 })), { maxLength: 300 }).map((t) => t.join(''));
    const header = fc.constantFrom('', `${HEADER.join(',')}\n`, `${HEADER.join(';')}\r\n`, `"site","year",block,trt,rate,timing,yield\n`);
    await fc.assert(
      fc.asyncProperty(header, text, fc.boolean(), (h, body, decimalComma) => readsCleanly(h + body, { ...MAPPING, decimalComma })),
      { numRuns: 2000, seed: SEED },
    );
  });

  it('a valid file truncated, with stray quotes inserted, or with characters deleted (1500 runs)', async () => {
    const edit = fc.oneof(
      fc.record({ kind: fc.constant('truncate' as const), at: fc.nat() }),
      fc.record({ kind: fc.constant('quote' as const), at: fc.nat() }),
      fc.record({ kind: fc.constant('delete' as const), at: fc.nat(), length: fc.integer({ min: 1, max: 40 }) }),
      fc.record({ kind: fc.constant('insert' as const), at: fc.nat(), text: fc.constantFrom(...CSVISH_TOKENS) }),
    );
    await fc.assert(
      fc.asyncProperty(fc.array(edit, { minLength: 1, maxLength: 5 }), (edits) => {
        let text = VALID;
        for (const e of edits) {
          const at = e.at % (text.length + 1);
          if (e.kind === 'truncate') text = text.slice(0, at);
          else if (e.kind === 'quote') text = `${text.slice(0, at)}"${text.slice(at)}`;
          else if (e.kind === 'delete') text = text.slice(0, at) + text.slice(at + e.length);
          else text = text.slice(0, at) + e.text + text.slice(at);
        }
        return readsCleanly(text, MAPPING);
      }),
      { numRuns: 1500, seed: SEED },
    );
  });

  it('huge fields: a cell of up to 4 MB, quoted, unquoted or never closed (12 runs)', async () => {
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 100_000, max: 4_000_000 }), fc.constantFrom('plain', 'quoted', 'open'), fc.integer({ min: 0, max: 39 }), (size, how, row) => {
        const rows = validRows();
        const big = 'x,'.repeat(size / 2);
        rows[row][6] = how === 'plain' ? 'x'.repeat(size) : 'HUGE';
        let text = toCsv(rows);
        if (how !== 'plain') text = text.replace('HUGE', how === 'quoted' ? `"${big}"` : `"${big}`);
        return readsCleanly(text, MAPPING);
      }),
      { numRuns: 12, seed: SEED },
    );
  });
});

describe('no quadratic blow-up on many distinct names', () => {
  // 20 000 rows, each with a new trial, treatment, block and trait: a linear scan per row
  // over everything seen would take minutes; the bound is the same CASE_LIMIT_MS.
  it('reads a long-format file of all-distinct names within the case limit', async () => {
    const lines = ['env,block,trt,trait,value'];
    for (let i = 0; i < 20_000; i++) lines.push(`E${i},B${i},T${i},trait${i},${i}`);
    await readsCleanly(`${lines.join('\n')}\n`, { columns: { trial: 'env', block: 'block', treatment: 'trt', trait: 'trait', response: 'value' } });
  });
});

describe('fuzzing the XLSX reader', () => {
  const valid = buildXlsx([{ name: 'Plots', rows: [HEADER, ...validRows()] }]);

  it('a valid workbook with random bytes changed or cut off (600 runs)', async () => {
    await fc.assert(
      fc.asyncProperty(fc.array(fc.tuple(fc.nat(), fc.integer({ min: 0, max: 255 })), { maxLength: 8 }), fc.option(fc.nat()), (flips, cut) => {
        const bytes = valid.slice(0, cut === null ? valid.length : cut % (valid.length + 1));
        for (const [at, v] of flips) if (bytes.length > 0) bytes[at % bytes.length] = v;
        return readsCleanly(bytes, MAPPING, 'fuzz.xlsx');
      }),
      { numRuns: 600, seed: SEED },
    );
  });

  it('well-zipped workbooks whose XML parts are random (600 runs)', async () => {
    const xmlish = fc.array(fc.oneof(fc.constantFrom('<row r="2">', '</row>', '<c r="A2" t="s">', '<c r="ZZZZ9">', '<c t="b"/>', '<v>', '</v>', '0', '99', '</c>', '<is><t>', '</t></is>', '<![CDATA[', ']]>', '<!--', '&amp;', '&#x110000;', '<sheetData>', '<si><t>a</t></si>', '<', '>', '"'), fc.string({ maxLength: 5 })), { maxLength: 80 }).map((t) => t.join(''));
    await fc.assert(
      fc.asyncProperty(xmlish, xmlish, xmlish, (sheet, strings, workbook) => {
        const files = {
          'xl/workbook.xml': strToU8(`<workbook><sheets><sheet name="S" r:id="rId1"/></sheets>${workbook}</workbook>`),
          'xl/_rels/workbook.xml.rels': strToU8('<Relationships><Relationship Id="rId1" Type="/worksheet" Target="worksheets/sheet1.xml"/><Relationship Id="rId2" Type="/sharedStrings" Target="sharedStrings.xml"/></Relationships>'),
          'xl/sharedStrings.xml': strToU8(`<sst>${strings}</sst>`),
          'xl/worksheets/sheet1.xml': strToU8(`<worksheet><sheetData><row r="1"><c r="A1" t="inlineStr"><is><t>site</t></is></c></row>${sheet}</sheetData></worksheet>`),
        };
        return readsCleanly(zipSync(files), MAPPING, 'fuzz.xlsx');
      }),
      { numRuns: 600, seed: SEED },
    );
  });
});

describe('fuzzing mappings and summary files', () => {
  it('any JSON value as a mapping gives a mapping or an IntakeError naming the file (1000 runs)', () => {
    fc.assert(
      fc.property(fc.oneof(fc.jsonValue(), fc.record({ columns: fc.dictionary(fc.constantFrom('trial', 'treatment', 'response', 'site', 'factors', 'covariates'), fc.jsonValue()), trait: fc.jsonValue() })), (json) => {
        try {
          parseMapping(json, 'm.json');
        } catch (e) {
          if (!(e instanceof IntakeError)) throw e;
          expect(e.problems.every((p) => p.file === 'm.json')).toBe(true);
        }
      }),
      { numRuns: 1000, seed: SEED },
    );
  });

  it('random CSV-ish summary files (800 runs)', async () => {
    const text = fc.array(fc.constantFrom('env', 'est', 'se', 'E1', 'E2', '0.5', '-1', '0', 'x', '', '"', ',', '\n'), { maxLength: 200 }).map((t) => t.join(''));
    await fc.assert(
      fc.asyncProperty(text, async (body) => {
        const path = writeTemp('sum.csv', `env,est,se\n${body}`);
        try {
          const rows = await readSummaryFile(path, { trial: 'env', estimate: 'est', se: 'se' });
          for (const r of rows) expect(r.se > 0 && Number.isFinite(r.estimate)).toBe(true);
        } catch (e) {
          if (!(e instanceof IntakeError)) throw e;
          expect(e.problems.every((p) => p.file === path)).toBe(true);
        }
      }),
      { numRuns: 800, seed: SEED },
    );
  });
});

// Hostile mappings (hardening, issue 20): keys named like Object.prototype members, documents
// nested far deeper than any real one, and declared encodings over arbitrary bytes.
const PROTO_KEYS = ['toString', 'constructor', '__proto__', 'hasOwnProperty', 'valueOf', 'isPrototypeOf', 'prototype', '__defineGetter__'];

describe('fuzzing hostile mappings', () => {
  const protoHeader = ['site', 'year', 'block', 'trt', 'rate', 'timing', 'yield', ...PROTO_KEYS.filter((k) => k !== '__proto__')];
  const protoRows = validRows().map((r) => [...r, ...PROTO_KEYS.filter((k) => k !== '__proto__').map((_, i) => String(i))]);
  let protoFile = '';
  const key = fc.oneof(fc.constantFrom(...PROTO_KEYS), fc.constantFrom(...protoHeader), fc.string({ maxLength: 6 }));

  it('mappings whose names and keys are prototype members read the file or give an IntakeError (1500 runs)', async () => {
    protoFile = writeTemp('proto.csv', toCsv(protoRows, protoHeader));
    const mapping = fc.record(
      {
        columns: fc.record({
          site: fc.constant('site'),
          year: fc.constant('year'),
          block: fc.oneof(fc.constant('block'), key),
          treatment: fc.oneof(fc.constant('trt'), key),
          response: fc.oneof(fc.constant('yield'), key),
          factors: fc.dictionary(key, fc.oneof(key, fc.constantFrom('rate', 'timing')), { maxKeys: 4 }),
          covariates: fc.array(key, { maxLength: 3 }),
        }),
        trait: fc.record({ name: key, unit: fc.oneof(fc.constantFrom('t/ha', 'kg/ha', '%'), key) }),
        control: key,
        factorUnits: fc.dictionary(key, fc.oneof(fc.constantFrom('kg/ha', 'lb/ac'), key), { maxKeys: 4 }),
        treatments: fc.array(key, { maxLength: 4 }),
        protocol: key,
      },
      { requiredKeys: ['columns'] },
    );
    await fc.assert(
      fc.asyncProperty(mapping, async (m) => {
        // Through JSON text, as from a file: a "__proto__" key arrives as an own key.
        const json: unknown = JSON.parse(JSON.stringify(m));
        let parsed: ImportMapping;
        try {
          parsed = parseMapping(json, 'm.json');
        } catch (e) {
          if (!(e instanceof IntakeError)) throw e;
          return;
        }
        await readsCleanly(readFileSync(protoFile), parsed);
      }),
      { numRuns: 1500, seed: SEED },
    );
  });

  it('JSON text nested up to 30,000 deep, with prototype keys, never overflows the stack (500 runs)', () => {
    const open = fc.array(fc.oneof(fc.constant('['), fc.constantFrom(...PROTO_KEYS.map((k) => `{"${k}":`))), { minLength: 1, maxLength: 8 });
    fc.assert(
      fc.property(open, fc.integer({ min: 1, max: 30_000 }), (pattern, depth) => {
        let text = '';
        const closers: string[] = [];
        for (let i = 0; i < depth; i++) {
          const o = pattern[i % pattern.length];
          text += o;
          closers.push(o === '[' ? ']' : '}');
        }
        text += '1' + closers.reverse().join('');
        const doc = `{"columns":${text}}`;
        try {
          parseMapping(parseBoundedJson(doc), 'deep.json');
        } catch (e) {
          if (e instanceof IntakeError || e instanceof JsonShapeError) {
            if (e instanceof JsonShapeError) expect(depth).toBeGreaterThan(MAX_JSON_DEPTH - 2);
            return;
          }
          throw e;
        }
      }),
      { numRuns: 500, seed: SEED },
    );
  });

  it('arbitrary bytes under each declared encoding read or give an IntakeError (1000 runs)', async () => {
    const encodings = [undefined, 'utf-8', 'latin-1', 'windows-1252', 'utf-16', 'utf-16le', 'utf-16be'] as const;
    const bytes = fc.oneof(
      fc.uint8Array({ maxLength: 2048 }),
      fc.tuple(fc.nat(), fc.uint8Array({ minLength: 1, maxLength: 4 })).map(([at, junk]) => {
        const valid = Buffer.from(VALID, 'utf8');
        const i = at % valid.length;
        return Buffer.concat([valid.subarray(0, i), junk, valid.subarray(i)]);
      }),
    );
    await fc.assert(
      fc.asyncProperty(bytes, fc.constantFrom(...encodings), (b, encoding) => readsCleanly(b, encoding === undefined ? MAPPING : { ...MAPPING, encoding })),
      { numRuns: 1000, seed: SEED },
    );
  });

  it('workbooks with prototype-named, formula-like and huge-number cells (300 runs)', async () => {
    const cell = fc.oneof(fc.constantFrom(...PROTO_KEYS, '=1+1', '+cmd', '@SUM(A1)', '1e309', 'NaN', '-Infinity', '1,234', 'CTL', 'A1', '40', ''), fc.string({ maxLength: 5 }));
    await fc.assert(
      fc.asyncProperty(fc.array(fc.tuple(fc.nat(), fc.nat(), cell), { maxLength: 12 }), (edits) => {
        const rows = [HEADER.slice(), ...validRows()];
        for (const [r, c, v] of edits) rows[r % rows.length][c % HEADER.length] = v;
        return readsCleanly(buildXlsx([{ name: 'Plots', rows }]), MAPPING, 'fuzz.xlsx');
      }),
      { numRuns: 300, seed: SEED },
    );
  });
});
