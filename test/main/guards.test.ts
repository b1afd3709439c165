// Navigation, new windows, webviews, permissions and remote requests are denied.
import { describe, expect, it } from 'vitest';
import { guardContents, guardSession, isAppUrl, type ContentsLike, type SessionLike } from '../../main/guards.js';

type Listener = (event: { preventDefault(): void; url?: string }, url?: string) => void;

function fakeContents() {
  const listeners = new Map<string, Listener>();
  let openHandler: ((d: { url: string }) => { action: string }) | null = null;
  const contents: ContentsLike = {
    on: (event, listener) => void listeners.set(event, listener),
    setWindowOpenHandler: (h) => void (openHandler = h),
  };
  const fire = (event: string, url: string): boolean => {
    let prevented = false;
    listeners.get(event)!({ preventDefault: () => (prevented = true), url }, url);
    return prevented;
  };
  return { contents, fire, open: (url: string) => openHandler!({ url }), listeners };
}

describe('window guards', () => {
  it('denies navigation away from the app, redirects and webviews', () => {
    const f = fakeContents();
    guardContents(f.contents);
    for (const url of ['https://example.org/', 'http://127.0.0.1:8080/', 'file:///etc/passwd', 'app://manyfield.evil/x', 'app://other/index.html', 'javascript:alert(1)', 'foo://manyfield/'])
      for (const event of ['will-navigate', 'will-frame-navigate', 'will-redirect']) expect(f.fire(event, url)).toBe(true);
    expect(f.fire('will-navigate', 'app://manyfield/index.html')).toBe(false);
    expect(f.fire('will-attach-webview', 'app://manyfield/index.html')).toBe(true);
  });

  it('denies every new window', () => {
    const f = fakeContents();
    guardContents(f.contents);
    for (const url of ['https://example.org/', 'app://manyfield/index.html', 'about:blank']) expect(f.open(url)).toEqual({ action: 'deny' });
  });

  it('denies permissions and cancels requests to anywhere but the app', () => {
    let request: Parameters<SessionLike['setPermissionRequestHandler']>[0] = null;
    let check: Parameters<SessionLike['setPermissionCheckHandler']>[0] = null;
    let before: ((d: { url: string }, cb: (r: { cancel?: boolean }) => void) => void) | null = null;
    guardSession({ setPermissionRequestHandler: (h) => void (request = h), setPermissionCheckHandler: (h) => void (check = h), webRequest: { onBeforeRequest: (l) => void (before = l) } });
    const granted: boolean[] = [];
    for (const p of ['media', 'geolocation', 'notifications', 'openExternal', 'clipboard-read']) request!(null, p, (g) => granted.push(g));
    expect(granted).toEqual([false, false, false, false, false]);
    expect(check!(null, 'media')).toBe(false);
    const cancelled = (url: string): boolean | undefined => {
      let r: { cancel?: boolean } = {};
      before!({ url }, (x) => (r = x));
      return r.cancel;
    };
    expect(cancelled('https://cdn.example.org/lib.js')).toBe(true);
    expect(cancelled('http://127.0.0.1:1234/api')).toBe(true);
    expect(cancelled('file:///etc/passwd')).toBe(true);
    expect(cancelled('app://manyfield/assets/index.js')).toBe(false);
    expect(cancelled('data:image/png;base64,AAAA')).toBe(false);
  });

  it('treats only app://manyfield/ as the app (custom schemes share the opaque origin "null")', () => {
    expect(isAppUrl('app://manyfield/index.html')).toBe(true);
    expect(isAppUrl('other://anything/')).toBe(false);
    expect(isAppUrl('app://manyfieldx/')).toBe(false);
  });
});
