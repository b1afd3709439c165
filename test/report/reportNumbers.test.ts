// The reader the report tests rely on catches what it must: a number off by more than half a
// unit of its last decimal, a bound that does not hold, a key missing from the document.
import { describe, expect, it } from 'vitest';
import { disagreements, markedNumbers } from '../support/reportNumbers.js';

const doc = { a: { b: [1.2345, 0.9981, 0.00002] } };
const span = (key: string, text: string, extra = '') => `<span class="n" data-key="${key}"${extra}>${text}</span>`;

describe('reading numbers back from a report', () => {
  it('accepts numbers within half a unit of the last decimal and bounds that hold', () => {
    const html = span('a.b.0', '1.23', ' data-decimals="2"') + span('a.b.1', 'more than 99.5%', ' data-bound="above" data-scale="100"') + span('a.b.2', '&lt; 0.0001', ' data-bound="below"');
    expect(markedNumbers(html)).toHaveLength(3);
    expect(disagreements(markedNumbers(html), doc)).toEqual([]);
  });

  it('rejects a wrong last digit, a false bound and a missing key', () => {
    const html = span('a.b.0', '1.24', ' data-decimals="2"') + span('a.b.2', 'more than 99.5%', ' data-bound="above" data-scale="100"') + span('a.c', '3', ' data-decimals="0"');
    const wrong = disagreements(markedNumbers(html), doc);
    expect(wrong).toHaveLength(3);
    expect(wrong[0]).toMatch(/shown 1\.24/);
    expect(wrong[1]).toMatch(/not above/);
    expect(wrong[2]).toMatch(/a\.c: not a number/);
  });
});
