// The name list the preload and server expose is exactly the handler map's keys.
import { describe, expect, it } from 'vitest';
import { api, handlerArgs, HANDLER_NAMES, LONG_HANDLERS, callHandler } from '../../src/api/handlers.js';

describe('handler names', () => {
  it('lists exactly the handlers of the map, each bound', () => {
    expect([...HANDLER_NAMES].sort()).toEqual(Object.keys(handlerArgs).sort());
    expect(Object.keys(api).sort()).toEqual([...HANDLER_NAMES].sort());
    for (const name of LONG_HANDLERS) expect(HANDLER_NAMES).toContain(name);
  });

  it('answers a name outside the map, even one on Object.prototype, with not-found', async () => {
    for (const name of ['nope', 'constructor', '__proto__', 'toString']) expect(await callHandler(name, {})).toMatchObject({ ok: false, error: { code: 'not-found' } });
  });
});
