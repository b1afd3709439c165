import { api } from '../src/api/handlers.js';
import { smallDisk } from '../test/support/tmpfs.js';
import { writeFileSync } from 'node:fs';
const disk = smallDisk(8 << 20)!;
try {
  const ws = disk.dir + '/w.manyfield';
  writeFileSync('/tmp/h3/p.csv', 'site,year,block,trt,yield\nA,2021,1,C,1\nA,2021,1,T,2\nA,2021,2,C,1.5\nA,2021,2,T,2.5\n');
  console.log(JSON.stringify(await api['data.import']({ workspace: ws, file: '/tmp/h3/p.csv', mapping: { columns: { site: 'site', year: 'year', block: 'block', treatment: 'trt', response: 'yield' }, trait: { name: 'yield', unit: 't/ha' } } })).slice(0, 100));
  disk.readOnly();
  console.log(JSON.stringify(await api['trials.list']({ workspace: ws })).slice(0, 300));
} finally { disk.release(); }
