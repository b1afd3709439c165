import { api } from '../src/api/handlers.js';
import { readFileSync } from 'node:fs';
const spec = JSON.parse(readFileSync('/tmp/h3/long.json', 'utf8'));
const c = new AbortController();
const t0 = performance.now();
let n = 0;
const r = api['analysis.run']({ workspace: '/tmp/h3/demo.mf', spec, save: false }, { signal: c.signal, onProgress: (e) => { if (n++ < 5 || n % 20 === 0) console.log(Math.round(performance.now() - t0), JSON.stringify(e)); } });
setTimeout(() => c.abort(), 20000);
console.log(JSON.stringify(await r).slice(0, 100), Math.round(performance.now() - t0));
