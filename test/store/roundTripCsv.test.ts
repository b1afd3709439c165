// The full round trip through a file: workspace -> exportTrait -> CSV -> intake reader (with the
// mapping the export returns) -> a fresh workspace holding the same content.
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { readPlotFile } from '../../src/intake/readPlotFile.js';
import { counts, exportTrait, importParsedTable, listTrials, openWorkspace, setSiteDetails, type Workspace } from '../../src/store/index.js';
import { syntheticTable } from './support/syntheticTable.js';
import { tempDirs } from './support/temp.js';
import { writeCsv } from './support/writeCsv.js';

const newDir = tempDirs();

describe('export -> CSV -> readPlotFile -> import', () => {
  it('gives back the same trials, plots and values', async () => {
    const dir = newDir();
    const a = openWorkspace(path.join(dir, 'a.manyfield'), { create: true });
    importParsedTable(a, syntheticTable({ trials: 7, seed: 5 }));
    setSiteDetails(a, 'S000', { covariates: { om: 3.1 } }); // site data do not travel with a trait export
    const exported = exportTrait(a, 'yield');
    const csv = path.join(dir, 'yield.csv');
    writeCsv(csv, exported.header, exported.rows);

    const table = await readPlotFile(csv, exported.mapping);
    const b: Workspace = openWorkspace(path.join(dir, 'b.manyfield'), { create: true });
    importParsedTable(b, table);
    expect(exportTrait(b, 'yield')).toEqual(exported);
    const listing = (ws: Workspace) => listTrials(ws).map(({ id: _id, ...rest }) => rest);
    expect(listing(b)).toEqual(listing(a));
    expect(counts(b)).toEqual(counts(a));
    a.close();
    b.close();
  });
});
