import { api } from '/work/wt/h3/src/api/handlers.js';
const r = await api['data.import']({ workspace: '/tmp/h3/p.manyfield', file: '/tmp/h3/proto.csv', mapping: '/tmp/h3/proto.json' });
console.log(JSON.stringify(r).slice(0, 600));
const spec = { trait: 'yield', control: 'C', contrasts: [{ name: 'x', coefficients: { C: -1, T: 1, toString: 0, __proto__: 0 } }], oneStage: null };
const s = await api['analysis.run']({ workspace: '/tmp/h3/p.manyfield', spec: JSON.parse(JSON.stringify(spec).replace('"x"','"constructor"')), save: false });
console.log(JSON.stringify(s).slice(0, 600));
