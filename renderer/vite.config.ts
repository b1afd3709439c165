// Builds the screens into dist/renderer/ (served by the browser mode, loaded by the Electron
// window). No React plugin: the JSX is compiled by Vite's own transform with the automatic runtime.
import { defineConfig } from 'vite';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('.', import.meta.url));

export default defineConfig({
  root,
  base: './',
  oxc: { jsx: { runtime: 'automatic' } },
  build: {
    outDir: fileURLToPath(new URL('../dist/renderer', import.meta.url)),
    emptyOutDir: true,
    // One script file, no inline scripts: the page runs under a strict Content-Security-Policy.
    modulePreload: { polyfill: false },
    assetsInlineLimit: 0,
    chunkSizeWarningLimit: 1500,
    sourcemap: false,
  },
  logLevel: 'warn',
});
