// Property test of the handler boundary (hardening, issue 20): any JSON as an analysis spec —
// prototype-named keys, deep nesting, huge counts, wrong types — comes back as a Result value.
// Never a thrown error, never a raw JavaScript failure (x.trim is not a function, a stack
// overflow) dressed as a message. Valid specs run on a small file (six trials, three treatments).
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { api } from '../../src/api/handlers.js';

const SEED = 20261205;
const RAW_JS_FAILURE = /is not a function|Cannot read properties|Cannot convert|Maximum call stack|is not iterable|undefined is not|Invalid string length/;
const PROTO_KEYS = ['toString', 'constructor', '__proto__', 'hasOwnProperty', 'valueOf', 'prototype'];

const dir = mkdtempSync(join(tmpdir(), 'manyfield-spec-fuzz-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const data = join(dir, 'plots.csv');
{
  const lines = ['env,block,trt,rate,y'];
  for (let e = 0; e < 6; e++) for (let b = 1; b <= 3; b++) for (const [t, r] of [['CTL', 0], ['A', 40], ['B', 80]] as const) lines.push(`E${e},${b},${t},${r},${(3 + r / 50 + ((e * 7 + b * 3) % 5) / 10).toFixed(2)}`);
  writeFileSync(data, `${lines.join('\n')}\n`);
}

const name = fc.oneof(fc.constantFrom(...PROTO_KEYS, 'CTL', 'A', 'B', 'rate', 'env', 'y', 'trt', 'block'), fc.string({ maxLength: 5 }));
const columns = fc.record(
  { trial: fc.oneof(fc.constant('env'), name), block: fc.oneof(fc.constant('block'), name), treatment: fc.oneof(fc.constant('trt'), name), response: fc.oneof(fc.constant('y'), name), factors: fc.dictionary(name, name, { maxKeys: 3 }) },
  { requiredKeys: [] },
);
const contrast = fc.oneof(
  fc.record({ name, coefficients: fc.dictionary(name, fc.oneof(fc.integer({ min: -3, max: 3 }), fc.double())), divisor: fc.oneof(fc.constant(1), fc.double()) }, { requiredKeys: ['name', 'coefficients'] }),
  fc.record({ name, trend: name, degree: fc.oneof(fc.constantFrom(1, 2, 3), fc.integer()) }),
  fc.record({ name, factor: name, levels: fc.tuple(name, name) }),
  fc.record({ name, kind: fc.constantFrom('treated-vs-control', 'toString') }),
  fc.jsonValue({ maxDepth: 3 }),
);
const proto = fc.constantFrom(...PROTO_KEYS);
const code = fc.oneof(fc.constantFrom('CTL', 'A', 'B'), proto);
/** Specs close to valid, with prototype-named contrast names, factors, codes and keys: these reach the engine. */
const nearlyValid = fc.record({
  columns: fc.record({ trial: fc.constant('env'), block: fc.constant('block'), treatment: fc.constant('trt'), response: fc.constant('y'), factors: fc.oneof(fc.constant({ rate: 'rate' }), proto.map((k) => Object.fromEntries([['rate', 'rate'], [k, 'rate']]))) }),
  control: fc.oneof(fc.constant('CTL'), code),
  contrasts: fc.array(
    fc.oneof(
      fc.record({ name: fc.oneof(proto, fc.constant('c')), coefficients: fc.constantFrom({ CTL: -2, A: 1, B: 1 }, { A: 1, B: -1 }), divisor: fc.constantFrom(1, 2) }),
      fc.tuple(fc.oneof(proto, fc.constant('c')), fc.dictionary(code, fc.integer({ min: -2, max: 2 }), { maxKeys: 4 })).map(([name, coefficients]) => ({ name, coefficients })),
      fc.record({ name: proto, trend: fc.oneof(fc.constant('rate'), proto), degree: fc.constantFrom(1, 2) }),
      fc.record({ name: proto, kind: fc.constant('treated-vs-control') }),
    ),
    { maxLength: 3 },
  ),
  oneStage: fc.constant(null),
  twoStage: fc.constantFrom(null, {}, { tau2: 'dl', interval: 'wald' }),
  moderators: fc.constantFrom([], ['toString']),
  rateResponse: fc.oneof(fc.constant(null), fc.record({ factor: fc.oneof(fc.constant('rate'), proto), model: fc.constantFrom('linear', 'quadratic'), priceRatio: fc.constant(0.01), bootstrap: fc.integer({ min: 0, max: 3 }) })),
  exclude: fc.array(fc.record({ trial: fc.oneof(fc.constant('E1'), proto), plot: fc.integer({ min: 0, max: 60 }), reason: fc.constant('fuzz') }), { maxLength: 2 }),
});
const wild = fc.record(
  {
    trait: name,
    columns: fc.oneof(columns, fc.jsonValue({ maxDepth: 2 })),
    control: name,
    contrasts: fc.array(contrast, { maxLength: 3 }),
    oneStage: fc.constant(null),
    twoStage: fc.oneof(fc.constant(null), fc.record({ tau2: fc.constantFrom('reml', 'dl', 'toString') }, { requiredKeys: [] })),
    rateResponse: fc.oneof(fc.constant(null), fc.record({ factor: name, priceRatio: fc.double(), bootstrap: fc.oneof(fc.integer({ min: 0, max: 3 }), fc.integer()), model: fc.constantFrom('linear', 'quadratic', 'constructor') }, { requiredKeys: ['factor', 'priceRatio'] })),
    moderators: fc.array(name, { maxLength: 2 }),
    exclude: fc.array(fc.record({ trial: name, plot: fc.oneof(name, fc.integer()), reason: name }), { maxLength: 2 }),
    confidence: fc.oneof(fc.constant(0.95), fc.double()),
  },
  { requiredKeys: ['columns'] },
);
const spec = fc.oneof({ arbitrary: wild, weight: 1 }, { arbitrary: nearlyValid, weight: 3 });

/** Deep nesting of arrays and prototype-keyed objects around a value. */
function nest(depth: number, inner: unknown): unknown {
  let v = inner;
  // fromEntries makes "__proto__" an own key, as JSON.parse does.
  for (let i = 0; i < depth; i++) v = i % 2 === 0 ? [v] : Object.fromEntries([[PROTO_KEYS[i % PROTO_KEYS.length], v]]);
  return v;
}

async function answersWithAResult(raw: unknown, viaText = true): Promise<void> {
  // Through JSON text, as from a file: "__proto__" keys arrive as own keys. (Deep documents are
  // built with own keys already; JSON.stringify itself overflows the stack on them.)
  const json: unknown = viaText ? JSON.parse(JSON.stringify(raw) ?? 'null') : raw;
  const r = await api['analysis.run']({ data, spec: json } as never);
  expect(typeof r.ok).toBe('boolean');
  tally.set(r.ok ? 'ok' : r.error.code, (tally.get(r.ok ? 'ok' : r.error.code) ?? 0) + 1);
  if (!r.ok && r.error.code === 'internal') internalKinds.add(`${(r.error.details as { name?: string } | undefined)?.name}: ${r.error.message.slice(0, 80)}`);
  if (!r.ok) {
    expect(r.error.message).not.toMatch(RAW_JS_FAILURE);
    const raised = (r.error.details as { name?: string } | undefined)?.name;
    expect(['TypeError', 'RangeError', 'ReferenceError', 'SyntaxError']).not.toContain(raised);
    expect(r.error.message.length).toBeLessThan(20_000);
  }
}

const tally = new Map<string, number>();
const internalKinds = new Set<string>();

describe('analysis specs at the handler boundary', () => {
  it('generated specs, valid and not, with prototype-named keys give a Result (1500 runs)', async () => {
    tally.clear();
    await fc.assert(fc.asyncProperty(spec, (s) => answersWithAResult(s)), { numRuns: 1500, seed: SEED });
    // The generator must reach the engine too, not only the schema's refusals.
    expect(tally.get('ok') ?? 0).toBeGreaterThan(50);
    // Every refusal is the input's fault and says so; none is an unexplained program fault.
    expect([...internalKinds]).toEqual([]);
    console.log('spec fuzz outcomes:', Object.fromEntries(tally), [...internalKinds]);
  }, 300_000);

  it('specs nested up to 5,000 deep give a Result naming the depth limit (300 runs)', async () => {
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 0, max: 5000 }), fc.constantFrom('columns', 'contrasts', 'exclude', 'rateResponse', 'toString'), async (depth, key) => {
        const doc = { columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y' }, [key]: nest(depth, 1) };
        await answersWithAResult(doc, false);
      }),
      { numRuns: 300, seed: SEED },
    );
  }, 300_000);
});
