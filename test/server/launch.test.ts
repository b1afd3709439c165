// Launch helpers: finding the Electron runtime (absent here: its binary was never downloaded),
// the start and serve options, and opening a browser without failing where there is none.
import { describe, expect, it } from 'vitest';
import { browserCommand, runOpener } from '../../src/server/openBrowser.js';
import { findElectron, parseStartArgs } from '../../src/server/startCommand.js';
import { parseServeArgs } from '../../src/server/serveCommand.js';

describe('findElectron', () => {
  it('returns the binary only when the package loads and the binary exists', () => {
    expect(findElectron(() => '/opt/electron/electron', () => true)).toBe('/opt/electron/electron');
    expect(findElectron(() => '/opt/electron/electron', () => false)).toBeNull();
    expect(findElectron(() => {
      throw new Error('Electron failed to install correctly, please delete node_modules/electron and try installing again');
    })).toBeNull();
    expect(findElectron(() => ({}), () => true)).toBeNull();
  });

  it('finds no runtime on this machine, whose electron package was installed without its binary', () => {
    expect(findElectron()).toBeNull();
  });
});

describe('start and serve options', () => {
  it('start: demo workspace by default, --browser, --no-open, --port', () => {
    const o = parseStartArgs(['--browser', '--no-open', '--port', '4100'], {});
    expect(o).toMatchObject({ browser: true, open: false, port: 4100 });
    expect(o.workspace).toMatch(/demo\.manyfield$/);
    expect(parseStartArgs([], { MANYFIELD_WORKSPACE: '/tmp/x.manyfield' }).workspace).toBe('/tmp/x.manyfield');
  });

  it('serve: needs --workspace, checks the port, refuses unknown options', () => {
    expect(parseServeArgs(['--workspace', 'w.manyfield', '--port', '8123', '--no-open'])).toEqual({ workspace: 'w.manyfield', port: 8123, open: false });
    expect(() => parseServeArgs(['--port', '1'])).toThrow(/--workspace/);
    expect(() => parseServeArgs(['--workspace', 'w', '--port', '70000'])).toThrow(/--port/);
    expect(() => parseServeArgs(['--workspace', 'w', '--host', '0.0.0.0'])).toThrow(/unknown option "--host"/);
  });
});

describe('opening the system browser', () => {
  it('uses xdg-open, open or start by platform', () => {
    expect(browserCommand('linux', 'u').command).toBe('xdg-open');
    expect(browserCommand('darwin', 'u')).toEqual({ command: 'open', args: ['u'] });
    expect(browserCommand('win32', 'u')).toEqual({ command: 'cmd', args: ['/c', 'start', '""', 'u'] });
  });

  it('resolves false instead of failing where no opener exists', async () => {
    expect(await runOpener('manyfield-no-such-opener', ['http://127.0.0.1:1/'])).toBe(false);
  });
});
