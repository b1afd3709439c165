// The native menu template: workspace commands call main's actions, recent workspaces are
// listed (or a disabled placeholder), developer tools only when asked for.
import { describe, expect, it } from 'vitest';
import type { MenuItemConstructorOptions } from 'electron';
import { menuTemplate, type MenuActions } from '../../main/menu.js';

function items(template: MenuItemConstructorOptions[], label: string): MenuItemConstructorOptions[] {
  return (template.find((m) => m.label === label)?.submenu ?? []) as MenuItemConstructorOptions[];
}

describe('menuTemplate', () => {
  it('wires the File commands and the recent workspaces to main\'s actions', () => {
    const calls: string[] = [];
    const actions: MenuActions = {
      openWorkspace: () => calls.push('open'),
      newWorkspace: () => calls.push('new'),
      openDemo: () => calls.push('demo'),
      importData: () => calls.push('import'),
      openRecent: (p) => calls.push(`recent:${p}`),
    };
    const recent = [{ path: '/data/north.manyfield', name: 'north', openedAt: '2026-01-01T00:00:00.000Z' }];
    const file = items(menuTemplate(actions, recent, { mac: false, devTools: false }), 'File');
    const click = (label: string) => (file.find((i) => i.label === label)!.click as () => void)();
    click('Open Workspace…');
    click('New Workspace…');
    click('Open the Demo Network');
    click('Import Data…');
    const recentItems = file.find((i) => i.label === 'Recent Workspaces')!.submenu as MenuItemConstructorOptions[];
    (recentItems[0].click as () => void)();
    expect(calls).toEqual(['open', 'new', 'demo', 'import', 'recent:/data/north.manyfield']);
    expect(file.at(-1)).toEqual({ role: 'quit' });
  });

  it('shows a disabled placeholder without recent workspaces and developer tools only on request', () => {
    const noop = () => {};
    const actions = { openWorkspace: noop, newWorkspace: noop, openDemo: noop, importData: noop, openRecent: noop };
    const plain = menuTemplate(actions, [], { mac: true, devTools: false });
    const recent = items(plain, 'File').find((i) => i.label === 'Recent Workspaces')!;
    expect(recent.enabled).toBe(false);
    expect(JSON.stringify(plain)).not.toContain('toggleDevTools');
    expect(plain[0]).toEqual({ role: 'appMenu' });
    expect(JSON.stringify(menuTemplate(actions, [], { mac: false, devTools: true }))).toContain('toggleDevTools');
  });
});
