// The Electron main process: the app:// protocol serving the renderer, guards on every window,
// the IPC dispatch of the handler map (long handlers in a worker thread), dialogs, the native
// menu and the recent list. Bundled by scripts/bundle-main.js into dist/main/index.cjs.
import { app, BrowserWindow, dialog, ipcMain, Menu, protocol, session } from 'electron';
import { existsSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { ProgressEvent } from '../src/api/context.js';
import { callHandler } from '../src/api/handlers.js';
import { readRecent, rememberRecent } from '../src/api/host/recentWorkspaces.js';
import { ManyfieldError, type Result } from '../src/api/result.js';
import { runInWorker } from '../src/api/worker/runInWorker.js';
import { appFile } from './appProtocol.js';
import { MENU_CHANNEL, type MenuCommand } from './channels.js';
import { guardContents, guardSession } from './guards.js';
import { registerIpc } from './ipcDispatch.js';
import { menuTemplate } from './menu.js';
import { PickedFiles } from './pickedFiles.js';
import { printReportInWindow } from './printReport.js';
import { APP_SCHEME, APP_START_URL, windowOptions } from './windowOptions.js';

const here = __dirname; // dist/main in the bundle
// In a package the worker runs from app.asar.unpacked (see asarUnpack in electron-builder.yml).
const workerFile = join(here.replace(/app\.asar(?=[\\/]|$)/, 'app.asar.unpacked'), 'jobWorker.cjs');
const rendererDir = join(here, '..', 'renderer');
const devTools = process.env.MANYFIELD_DEVTOOLS === '1';
const startWorkspace = argValue('--workspace');

function argValue(flag: string): string | undefined {
  const i = process.argv.indexOf(flag);
  return i >= 0 ? process.argv[i + 1] : undefined;
}

protocol.registerSchemesAsPrivileged([{ scheme: APP_SCHEME, privileges: { standard: true, secure: true, supportFetchAPI: true } }]);
app.enableSandbox();

const policy = new PickedFiles();
let window: BrowserWindow | null = null;

function recentFile(): string {
  return join(app.getPath('userData'), 'recent-workspaces.json');
}

function remember(path: string): void {
  try {
    rememberRecent(recentFile(), path);
    refreshMenu();
  } catch {
    // a read-only profile only loses the recent list
  }
}

const runLong = (name: string, args: unknown, ctx: { onProgress: (e: ProgressEvent) => void; signal: AbortSignal }) =>
  runInWorker(name, args, { ...ctx, workerFile });

let demoBuild: Promise<Result<unknown>> | null = null;

async function demoWorkspace(): Promise<string> {
  const path = join(app.getPath('userData'), 'demo.manyfield');
  if (!existsSync(path)) {
    // One build at a time: a second request (menu and start screen together) waits for the first.
    demoBuild ??= runLong('demo.build', { workspace: path }, { onProgress: () => {}, signal: new AbortController().signal }).finally(() => (demoBuild = null));
    const built = await demoBuild;
    if (!built.ok && !existsSync(path)) throw new ManyfieldError(built.error.code, built.error.message);
  }
  remember(path);
  return policy.allowWorkspace(path);
}

async function pickWorkspace(mode: unknown, name?: unknown): Promise<string | null> {
  if (window === null) return null;
  const filters = [{ name: 'Manyfield workspace', extensions: ['manyfield'] }];
  if (mode === 'new') {
    const suggested = typeof name === 'string' && /^[\w][\w .-]{0,79}$/.test(name.trim()) ? name.trim().replace(/(\.manyfield)?$/, '.manyfield') : 'network.manyfield';
    const r = await dialog.showSaveDialog(window, { title: 'New workspace', defaultPath: suggested, filters });
    return r.canceled || !r.filePath ? null : policy.allowWorkspace(r.filePath);
  }
  if (mode !== 'open') throw new ManyfieldError('invalid-argument', 'pickWorkspace takes "open" or "new"');
  const r = await dialog.showOpenDialog(window, { title: 'Open workspace', properties: ['openFile'], filters });
  if (r.canceled || r.filePaths.length === 0) return null;
  remember(r.filePaths[0]);
  return policy.allowWorkspace(r.filePaths[0]);
}

async function pickDataFile(): Promise<{ ref: string; name: string } | null> {
  if (window === null) return null;
  const r = await dialog.showOpenDialog(window, { title: 'Choose a plot file', properties: ['openFile'], filters: [{ name: 'Plot files', extensions: ['csv', 'txt', 'tsv', 'xlsx', 'xlsm'] }] });
  return r.canceled || r.filePaths.length === 0 ? null : policy.addFile(r.filePaths[0]);
}

async function saveFile(name: unknown, data: unknown): Promise<boolean> {
  if (window === null) return false;
  if (typeof name !== 'string' || !(typeof data === 'string' || data instanceof Uint8Array)) throw new ManyfieldError('invalid-argument', 'saveFile takes a file name and text or bytes');
  const r = await dialog.showSaveDialog(window, { title: 'Save', defaultPath: name.replace(/[\\/]/g, '_') });
  if (r.canceled || !r.filePath) return false;
  writeFileSync(r.filePath, data);
  return true;
}

async function recentWorkspaces() {
  return readRecent(recentFile())
    .filter((e) => existsSync(e.path))
    .map((e) => ({ ...e, path: policy.allowWorkspace(e.path) }));
}

function sendMenu(command: MenuCommand): void {
  window?.webContents.send(MENU_CHANNEL, command);
}

function refreshMenu(): void {
  const recent = readRecent(recentFile()).filter((e) => existsSync(e.path));
  Menu.setApplicationMenu(
    Menu.buildFromTemplate(
      menuTemplate(
        {
          openWorkspace: () => void pickWorkspace('open').then((path) => path && sendMenu({ command: 'open-workspace', path })),
          newWorkspace: () => void pickWorkspace('new').then((path) => path && sendMenu({ command: 'new-workspace', path })),
          openDemo: () => void demoWorkspace().then((path) => sendMenu({ command: 'open-demo', path })),
          importData: () => sendMenu({ command: 'import-data' }),
          openRecent: (path) => {
            remember(path);
            sendMenu({ command: 'open-workspace', path: policy.allowWorkspace(path) });
          },
        },
        recent,
        { mac: process.platform === 'darwin', devTools },
      ),
    ),
  );
}

app.on('web-contents-created', (_event, contents) => guardContents(contents));
app.on('window-all-closed', () => app.quit());

void app.whenReady().then(() => {
  protocol.handle(APP_SCHEME, (request) => {
    const f = appFile(rendererDir, request.url);
    return new Response(typeof f.body === 'string' ? f.body : Buffer.from(f.body), { status: f.status, headers: f.headers });
  });
  guardSession(session.defaultSession);
  registerIpc(ipcMain, {
    policy,
    runQuick: (name, args, ctx) => callHandler(name, args, ctx),
    runLong,
    host: {
      pickDataFile: () => pickDataFile(),
      pickWorkspace: (mode, name) => pickWorkspace(mode, name),
      launchWorkspace: async () => (startWorkspace !== undefined && existsSync(startWorkspace) ? policy.allowWorkspace(startWorkspace) : null),
      recentWorkspaces: () => recentWorkspaces(),
      demoWorkspace: () => demoWorkspace(),
      saveFile: (name, data) => saveFile(name, data),
      printReport: (html) => printReportInWindow(html),
    },
    onWorkspaceUsed: remember,
  });
  if (startWorkspace !== undefined && existsSync(startWorkspace)) {
    policy.allowWorkspace(startWorkspace);
    remember(startWorkspace);
  }
  refreshMenu();
  window = new BrowserWindow(windowOptions(join(here, 'preload.cjs'), { devTools }));
  window.once('ready-to-show', () => window?.show());
  window.on('closed', () => (window = null));
  void window.loadURL(APP_START_URL);
});
