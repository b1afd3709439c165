// The native menu as a plain template (tested without Electron): workspace commands, recent
// workspaces, the standard edit and window roles. Actions are callbacks main supplies.
import type { MenuItemConstructorOptions } from 'electron';
import type { RecentEntry } from '../src/api/host/recentWorkspaces.js';

export interface MenuActions {
  openWorkspace(): void;
  newWorkspace(): void;
  openDemo(): void;
  importData(): void;
  openRecent(path: string): void;
}

export function menuTemplate(actions: MenuActions, recent: readonly RecentEntry[], options: { mac: boolean; devTools: boolean }): MenuItemConstructorOptions[] {
  const file: MenuItemConstructorOptions = {
    label: 'File',
    submenu: [
      { label: 'Open Workspace…', accelerator: 'CmdOrCtrl+O', click: () => actions.openWorkspace() },
      { label: 'New Workspace…', accelerator: 'CmdOrCtrl+N', click: () => actions.newWorkspace() },
      { label: 'Open the Demo Network', click: () => actions.openDemo() },
      {
        label: 'Recent Workspaces',
        enabled: recent.length > 0,
        submenu: recent.length > 0 ? recent.map((r) => ({ label: `${r.name} — ${r.path}`, click: () => actions.openRecent(r.path) })) : [{ label: '(none yet)', enabled: false }],
      },
      { type: 'separator' },
      { label: 'Import Data…', accelerator: 'CmdOrCtrl+I', click: () => actions.importData() },
      { type: 'separator' },
      options.mac ? { role: 'close' } : { role: 'quit' },
    ],
  };
  const view: MenuItemConstructorOptions = {
    label: 'View',
    submenu: [{ role: 'reload' }, { type: 'separator' }, { role: 'resetZoom' }, { role: 'zoomIn' }, { role: 'zoomOut' }, { type: 'separator' }, { role: 'togglefullscreen' }, ...(options.devTools ? [{ role: 'toggleDevTools' } as const] : [])],
  };
  return [...(options.mac ? [{ role: 'appMenu' } as const] : []), file, { role: 'editMenu' }, view, { role: 'windowMenu' }];
}
