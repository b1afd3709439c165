// Navigation, new windows, webviews, permissions and remote requests: all denied. The page is
// the app's own files under app://manyfield; nothing else may load in the window.
import { APP_ORIGIN } from './windowOptions.js';

interface PreventableEvent {
  preventDefault(): void;
  readonly url?: string;
}

export interface ContentsLike {
  on(event: 'will-navigate' | 'will-redirect' | 'will-attach-webview' | 'will-frame-navigate', listener: (event: PreventableEvent, url?: string) => void): unknown;
  setWindowOpenHandler(handler: (details: { url: string }) => { action: 'deny' } | { action: 'allow' }): void;
}

export interface SessionLike {
  setPermissionRequestHandler(handler: ((contents: unknown, permission: string, callback: (granted: boolean) => void) => void) | null): void;
  setPermissionCheckHandler(handler: ((contents: unknown, permission: string) => boolean) | null): void;
  webRequest: { onBeforeRequest(listener: (details: { url: string }, callback: (response: { cancel?: boolean }) => void) => void): void };
}

/** The app's own pages: same origin, nothing else (a reload of the app is not a navigation away). */
export function isAppUrl(url: string): boolean {
  // A prefix test, not URL.origin: custom schemes have the opaque origin "null", shared by all.
  return url === APP_ORIGIN || url.startsWith(`${APP_ORIGIN}/`);
}

/** Requests a window may make: the app's files, and the data/blob URLs of exports and images. */
export function isAllowedRequest(url: string): boolean {
  return isAppUrl(url) || url.startsWith('data:') || url.startsWith('blob:') || url.startsWith('devtools:');
}

export function guardContents(contents: ContentsLike): void {
  const denyAway = (event: PreventableEvent, url?: string): void => {
    if (!isAppUrl(event.url ?? url ?? '')) event.preventDefault();
  };
  contents.on('will-navigate', denyAway);
  contents.on('will-frame-navigate', denyAway);
  contents.on('will-redirect', denyAway);
  contents.on('will-attach-webview', (event) => event.preventDefault());
  contents.setWindowOpenHandler(() => ({ action: 'deny' }));
}

export function guardSession(session: SessionLike): void {
  session.setPermissionRequestHandler((_contents, _permission, callback) => callback(false));
  session.setPermissionCheckHandler(() => false);
  session.webRequest.onBeforeRequest((details, callback) => callback({ cancel: !isAllowedRequest(details.url) }));
}
