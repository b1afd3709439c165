// workspace_meta: small named JSON values (network name, the demo's true parameters ...).
import type { Workspace } from './workspace.js';

export function getMeta<T = unknown>(ws: Workspace, key: string): T | undefined {
  const row = ws.db.prepare('SELECT value_json FROM workspace_meta WHERE key = ?').get(key) as { value_json: string } | undefined;
  return row === undefined ? undefined : (JSON.parse(row.value_json) as T);
}

export function setMeta(ws: Workspace, key: string, value: unknown): void {
  const json = JSON.stringify(value);
  if (json === undefined) throw new TypeError(`workspace meta "${key}": value cannot be stored as JSON`);
  ws.db
    .prepare('INSERT INTO workspace_meta (key, value_json) VALUES (?, ?) ON CONFLICT (key) DO UPDATE SET value_json = excluded.value_json')
    .run(key, json);
}
