// Child process of the crash test: import a generated table into an existing workspace and say
// when the import starts and when it has committed. The parent kills it with SIGKILL.
// Usage: node --import tsx crashChild.ts <workspace> <prefix> <trials>
import { importParsedTable, openWorkspace } from '../../../src/store/index.js';
import { syntheticTable } from './syntheticTable.js';

const [workspace, prefix, trials] = process.argv.slice(2);
const table = syntheticTable({ trials: Number(trials), prefix, seed: 7 });
const ws = openWorkspace(workspace);
process.stdout.write('importing\n');
importParsedTable(ws, table);
process.stdout.write('committed\n');
ws.close();
process.stdout.write('closed\n');
