// Child process of the crash tests: import a generated table into an existing workspace and say
// when the import starts and when it has committed. The parent kills it with SIGKILL.
// Usage: node --import tsx crashChild.ts <workspace> <prefix> <trials> [replaceSeed]
// With replaceSeed, the table (generated from that seed) carries the hash of the seed-7 table
// and replaces that batch (--replace).
import { importParsedTable, openWorkspace } from '../../../src/store/index.js';
import { syntheticTable } from './syntheticTable.js';

const [workspace, prefix, trials, replaceSeed] = process.argv.slice(2);
const original = syntheticTable({ trials: Number(trials), prefix, seed: 7 });
const table = replaceSeed === undefined ? original : { ...syntheticTable({ trials: Number(trials), prefix, seed: Number(replaceSeed) }), sha256: original.sha256 };
const ws = openWorkspace(workspace);
process.stdout.write('importing\n');
importParsedTable(ws, table, { replace: replaceSeed !== undefined });
process.stdout.write('committed\n');
ws.close();
process.stdout.write('closed\n');
