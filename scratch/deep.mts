import { api } from '../src/api/handlers.js';
let v: unknown = 1;
for (let i = 0; i < 4117; i++) v = i % 2 === 0 ? [v] : Object.fromEntries([[['toString','constructor','__proto__'][i % 3], v]]);
const t0 = performance.now();
const json = JSON.parse(JSON.stringify({ columns: v }));
const r = await api['analysis.run']({ data: '/tmp/h3/p.csv', spec: json } as never);
console.log(Math.round(performance.now() - t0), JSON.stringify(r).slice(0, 400));
