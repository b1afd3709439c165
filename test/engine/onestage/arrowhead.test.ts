// The arrowhead store against a dense symmetric matrix built alongside it (exact: both only add).
import { describe, expect, it } from 'vitest';
import { SymmetricArrowhead, sharedParameterCount } from '../../../src/engine/onestage/arrowhead.js';

describe('symmetric arrowhead store', () => {
  it('adds, reads, combines and expands like the dense matrix', () => {
    const n = 7;
    const shared = 3;
    const a = new SymmetricArrowhead(n, shared);
    const b = new SymmetricArrowhead(n, shared);
    const dense = new Float64Array(n * n);
    let v = 1;
    const add = (k: number, l: number): void => {
      a.addSymmetric(k, l, v);
      b.addSymmetric(k, l, 2 * v);
      dense[k * n + l] += v;
      if (k !== l) dense[l * n + k] += v;
      v += 0.5;
    };
    for (let k = 0; k < shared; k++) for (let l = 0; l < n; l++) add(k, l);
    for (let k = shared; k < n; k++) add(k, k);
    add(5, 1); // a trial-level parameter meeting a shared one, written from its side
    expect(Array.from(a.toDense())).toEqual(Array.from(dense));
    for (let k = 0; k < n; k++) for (let l = 0; l < n; l++) expect(a.get(k, l)).toBe(dense[k * n + l]);
    const c = a.combine(3, b, -1); // 3a - 2a = a
    expect(Array.from(c.toDense())).toEqual(Array.from(dense));
    const copy = a.clone();
    copy.addSymmetric(0, 0, 1);
    expect(a.get(0, 0)).toBe(dense[0]);
    expect(copy.get(0, 0)).toBe(dense[0] + 1);
  });

  it('refuses two trial-level parameters meeting each other', () => {
    expect(() => new SymmetricArrowhead(5, 2).addSymmetric(3, 4, 1)).toThrow(/not an arrowhead/);
  });

  it('counts the shared parameters: the random terms with one residual per trial, all of them otherwise', () => {
    const terms = [{ kind: 'term' }, { kind: 'term' }];
    expect(sharedParameterCount([...terms, { kind: 'residual', trial: -1 }])).toBe(3);
    expect(sharedParameterCount([...terms, { kind: 'residual', trial: 0 }, { kind: 'residual', trial: 1 }])).toBe(2);
  });
});
