// The analysis path (rows straight into per-trial engine plots) must give exactly what the
// import path gives: networkFromTable(readDataForAnalysis(...)) for a valid file, the same
// IntakeError problems, in the same order, for a damaged one. Compared with toEqual (exact).
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { networkFromTable } from '../../src/api/analysis/networkFromTable.js';
import { readDataForAnalysis, readNetworkForAnalysis, specHasOneRowPerPlot } from '../../src/intake/index.js';
import { IntakeError, type IntakeProblem } from '../../src/intake/types.js';
import { analysisSpecSchema, type AnalysisSpec } from '../../src/spec/analysisSpec.js';
import { brief, HEADER, setCell, toCsv, validRows, writeTemp } from './helpers.js';

const SPEC = analysisSpecSchema.parse({
  columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield', factors: { rate: 'rate', timing: 'timing' } },
  control: 'CTL',
});

type Outcome = { ok: true; network: unknown; sha256: string } | { ok: false; problems: unknown; truncated: boolean };

async function outcome(f: () => Promise<{ network: unknown; sha256: string }>): Promise<Outcome> {
  try {
    const { network, sha256 } = await f();
    return { ok: true, network, sha256 };
  } catch (e) {
    if (!(e instanceof IntakeError)) throw e;
    return { ok: false, problems: e.problems, truncated: e.truncated };
  }
}

/** Both paths on one file; returns the analysis path's outcome after checking they agree. */
async function bothAgree(path: string, spec: AnalysisSpec): Promise<Outcome> {
  const viaTable = await outcome(async () => {
    const { table } = await readDataForAnalysis(path, spec);
    return { network: networkFromTable(table, table.traits[0].name), sha256: table.sha256 };
  });
  const direct = await outcome(() => readNetworkForAnalysis(path, spec));
  expect(direct).toEqual(viaTable);
  return direct;
}

describe('readNetworkForAnalysis gives what the table path gives', () => {
  it('a valid file with sites, years, blocks and factors; the fingerprint is the file SHA-256', async () => {
    const path = writeTemp('valid.csv', toCsv(validRows()));
    const r = await bothAgree(path, SPEC);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.sha256).toBe(createHash('sha256').update(readFileSync(path)).digest('hex'));
    const net = r.network as { trials: { trial: string; plots: { plotId: unknown; value: number | null }[] }[] };
    expect(net.trials.map((t) => t.trial)).toEqual(['North-2021', 'North-2022', 'South-2021', 'South-2022']);
    expect(net.trials[0].plots[0]).toEqual({ plotId: 2, label: null, sourceRow: 2, treatment: 'CTL', block: '1', row: null, col: null, value: 5 });
    expect(net.trials.reduce((s, t) => s + t.plots.length, 0)).toBe(40);
  });

  it('missing values, plot ids, row/column layouts, design and covariate columns', async () => {
    const header = ['env', 'plot', 'design', 'row', 'col', 'block', 'trt', 'y', 'ph'];
    const rows: string[][] = [];
    for (const env of ['E1', 'E2', 'E3']) {
      for (let i = 0; i < 8; i++) {
        const y = i === 3 && env === 'E2' ? 'NA' : String(3 + ((i * 7) % 5) / 4);
        rows.push([env, `${env}p${i}`, env === 'E3' ? 'row-column' : '', String(1 + (i >> 1)), String(1 + (i & 1)), env === 'E1' ? String(1 + (i >> 2)) : '', i % 2 === 0 ? 'CTL' : 'A1', y, env === 'E1' ? '6.1' : '']);
      }
    }
    const withPlot = analysisSpecSchema.parse({ columns: { trial: 'env', plot: 'plot', design: 'design', row: 'row', col: 'col', block: 'block', treatment: 'trt', response: 'y', covariates: ['ph'] } });
    expect((await bothAgree(writeTemp('layout.csv', toCsv(rows, header)), withPlot)).ok).toBe(true);
    const { plot: _p, ...noPlot } = withPlot.columns!;
    expect((await bothAgree(writeTemp('layout2.csv', toCsv(rows, header)), analysisSpecSchema.parse({ columns: noPlot }))).ok).toBe(true);
  });

  it('damaged files: every problem, in order, with the same truncation', async () => {
    const damaged: [string, string, string][] = [
      ['17', 'yield', '12,4x'],
      ['5', 'year', '20x1'],
      ['9', 'trt', ''],
      ['12', 'rate', '55'],
      ['3', 'block', ''],
    ];
    for (const [row, column, value] of damaged) {
      const rows = validRows();
      setCell(rows, Number(row), column, value);
      const r = await bothAgree(writeTemp('bad.csv', toCsv(rows, HEADER)), SPEC);
      expect(r.ok).toBe(false);
    }
    // A duplicated plot (same block and treatment) and a single-replicate trial.
    const dup = validRows();
    dup[6] = [...dup[1]];
    expect((await bothAgree(writeTemp('dup.csv', toCsv(dup)), SPEC)).ok).toBe(false);
    expect((await bothAgree(writeTemp('single.csv', toCsv(validRows(['N'], ['2021'], 1))), SPEC)).ok).toBe(false);
    // More problems than the list holds: 300 bad values.
    const many = validRows(['A', 'B', 'C', 'D', 'E', 'F', 'G', 'H'], ['2019', '2020', '2021', '2022'], 2).map((r) => [...r.slice(0, 6), 'x']);
    const r = await bothAgree(writeTemp('many.csv', toCsv(many)), SPEC);
    expect(r.ok === false && r.truncated).toBe(true);
    // No columns at all in the spec.
    await expect(readNetworkForAnalysis('x.csv', analysisSpecSchema.parse({}))).rejects.toBeInstanceOf(IntakeError);
  });

  it('rows of the trials interleaved (grouped by trial at the end, file order kept within each trial)', async () => {
    const rows = validRows(['North', 'South', 'East'], ['2021', '2022'], 3);
    // deal the rows round-robin from the back so no trial's rows are adjacent
    const dealt: string[][] = [];
    for (let k = 0; k < 7; k++) for (let i = rows.length - 1 - k; i >= 0; i -= 7) dealt.push(rows[i]);
    expect(dealt.length).toBe(rows.length);
    setCell(dealt, 4, 'yield', 'NA');
    const r = await bothAgree(writeTemp('interleaved.csv', toCsv(dealt)), SPEC);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const net = r.network as { trials: { trial: string; plots: { plotId: unknown; value: number | null }[] }[] };
    expect(net.trials.length).toBe(6);
    for (const t of net.trials) {
      const ids = t.plots.map((p) => p.plotId as number);
      expect(ids).toEqual([...ids].sort((a, b) => a - b));
    }
  });

  it('block+treatment plot keys beyond the first 256 treatments (kept in a map) catch duplicates too', async () => {
    const header = ['env', 'block', 'trt', 'y'];
    const rows: string[][] = [];
    for (const b of ['1', '2']) for (let t = 0; t < 300; t++) rows.push(['E1', b, `T${t}`, String(t % 7)]);
    rows.push(['E1', '2', 'T10', '1'], ['E1', '1', 'T280', '2']);
    const spec = analysisSpecSchema.parse({ columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y' } });
    const r = await bothAgree(writeTemp('wide.csv', toCsv(rows, header)), spec);
    expect(r.ok === false && brief(r.problems as IntakeProblem[])).toEqual([
      ['duplicate-plot', 602, 'block', '2'],
      ['duplicate-plot', 603, 'block', '1'],
    ]);
  });

  it('random edits of a valid file agree (seeded, 300 runs)', async () => {
    const valid = toCsv(validRows());
    const tokens = ['CTL', 'A1', 'NA', '', '"', ',', '\n', '2021', '1', '40', 'x'];
    const edit = fc.record({ at: fc.nat(), cut: fc.integer({ min: 0, max: 12 }), text: fc.constantFrom(...tokens) });
    await fc.assert(
      fc.asyncProperty(fc.array(edit, { minLength: 1, maxLength: 4 }), async (edits) => {
        let text = valid;
        for (const e of edits) {
          const at = e.at % (text.length + 1);
          text = text.slice(0, at) + e.text + text.slice(at + e.cut);
        }
        await bothAgree(writeTemp('edit.csv', text), SPEC);
      }),
      { numRuns: 300, seed: 7031 },
    );
  });

  it('is only for files without a trait column', async () => {
    const long = analysisSpecSchema.parse({ columns: { trial: 'env', treatment: 'trt', trait: 'trait', response: 'v' } });
    expect(specHasOneRowPerPlot(long)).toBe(false);
    expect(specHasOneRowPerPlot(SPEC)).toBe(true);
    await expect(readNetworkForAnalysis('x.csv', long)).rejects.toThrow(/trait column/);
  });
});
