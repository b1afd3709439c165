// The window factory's options: the security settings DESIGN §8 asks for, exactly.
import { describe, expect, it } from 'vitest';
import { windowOptions, APP_START_URL } from '../../main/windowOptions.js';

describe('windowOptions', () => {
  it('isolates and sandboxes the renderer, without Node, webviews, insecure content or drag-and-drop navigation', () => {
    const o = windowOptions('/app/dist/main/preload.cjs');
    expect(o.webPreferences).toEqual({
      preload: '/app/dist/main/preload.cjs',
      contextIsolation: true,
      nodeIntegration: false,
      nodeIntegrationInWorker: false,
      nodeIntegrationInSubFrames: false,
      sandbox: true,
      webSecurity: true,
      allowRunningInsecureContent: false,
      experimentalFeatures: false,
      webviewTag: false,
      navigateOnDragDrop: false,
      spellcheck: false,
      safeDialogs: true,
      devTools: false,
    });
    expect(o.show).toBe(false); // shown once ready, no flash of an empty window
  });

  it('opens developer tools only when asked, and loads the app from its own scheme', () => {
    expect(windowOptions('p', { devTools: true }).webPreferences?.devTools).toBe(true);
    expect(APP_START_URL).toBe('app://manyfield/index.html');
  });
});
