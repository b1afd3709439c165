// The one place the window's options are decided (asserted by a unit test): an isolated,
// sandboxed renderer without Node, with no webviews, no insecure content and no drag-and-drop
// navigation. Pure: no Electron import at run time.
import type { BrowserWindowConstructorOptions } from 'electron';

export const APP_SCHEME = 'app';
export const APP_ORIGIN = `${APP_SCHEME}://manyfield`;
export const APP_START_URL = `${APP_ORIGIN}/index.html`;

export function windowOptions(preloadPath: string, options: { devTools?: boolean } = {}): BrowserWindowConstructorOptions {
  return {
    width: 1280,
    height: 840,
    minWidth: 900,
    minHeight: 600,
    show: false,
    title: 'Manyfield',
    backgroundColor: '#ffffff',
    webPreferences: {
      preload: preloadPath,
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
      devTools: options.devTools ?? false,
    },
  };
}
