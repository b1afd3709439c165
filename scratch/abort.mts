import { api } from '../src/api/handlers.js';
import { readFileSync } from 'node:fs';
const spec = JSON.parse(readFileSync('/tmp/h3/short.json', 'utf8'));
const c = new AbortController();
const t0 = performance.now();
setTimeout(() => { console.log('abort at', Math.round(performance.now() - t0)); c.abort(); }, 300000);
const r = await api['analysis.run']({ workspace: '/tmp/h3/demo.mf', spec, save: false }, { signal: c.signal, onProgress: (e) => { if (Math.random() < 0.001) console.log(e); } });
console.log(Math.round(performance.now() - t0), JSON.stringify(r).slice(0, 200));
