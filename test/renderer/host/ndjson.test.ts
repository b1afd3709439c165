import { describe, expect, it } from 'vitest';
import { parseWireLine, splitNdjson } from '../../../renderer/host/ndjson.js';

describe('NDJSON splitting', () => {
  it('keeps a line cut between chunks for the next chunk', () => {
    const a = splitNdjson('', '{"progress":{"stage":"read","fraction":0.5}}\n{"res');
    expect(a.lines).toEqual(['{"progress":{"stage":"read","fraction":0.5}}']);
    const b = splitNdjson(a.rest, 'ult":{"ok":true,"data":1}}\n');
    expect(b.lines).toEqual(['{"result":{"ok":true,"data":1}}']);
    expect(b.rest).toBe('');
    expect(parseWireLine(b.lines[0])).toEqual({ result: { ok: true, data: 1 } });
  });
  it('refuses a line that is neither progress nor result', () => {
    expect(() => parseWireLine('{"other":1}')).toThrow(/unexpected line/);
  });
});
